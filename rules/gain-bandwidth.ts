import { claimRule } from '../src/verdicts/claim-rule';

export default claimRule({
  id: 'gain-bandwidth',
  claim: 'gbw',
  noun: 'gain-bandwidth',
  description: 'The claimed gain-bandwidth matches the unity-gain frequency of the exact open-loop response.',
});
