import { claimRule } from '../src/verdicts/claim-rule';

export default claimRule({
  id: 'closed-loop-gain',
  claim: 'closed_loop_gain',
  noun: 'closed-loop gain',
  description: 'The claimed closed-loop gain matches A0/(1 + β·A0) of the exact network, the finite open-loop gain included.',
});
