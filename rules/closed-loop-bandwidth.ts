import { claimRule } from '../src/verdicts/claim-rule';

export default claimRule({
  id: 'closed-loop-bandwidth',
  claim: 'closed_loop_bandwidth',
  noun: 'closed-loop bandwidth',
  description: 'The claimed closed-loop bandwidth matches the −3 dB frequency of the exact closed-loop response.',
});
