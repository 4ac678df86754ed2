import { claimRule } from '../src/verdicts/claim-rule';

export default claimRule({
  id: 'bandwidth',
  claim: 'bandwidth',
  noun: 'bandwidth',
  description: 'The claimed −3 dB bandwidth matches the exact frequency response of the stage.',
});
