import { claimRule } from '../src/verdicts/claim-rule';

export default claimRule({
  id: 'input-noise',
  claim: 'input_noise',
  noun: 'input noise density',
  description: 'The claimed input-referred noise density matches the density from every noise source of the exact small-signal network.',
});
