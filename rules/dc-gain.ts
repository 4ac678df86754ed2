import { claimRule } from '../src/verdicts/claim-rule';

export default claimRule({
  id: 'dc-gain',
  claim: 'dc_gain',
  noun: 'DC gain',
  description: 'The claimed open-loop DC gain matches the nodal solve of the exact small-signal network.',
});
