import { claimRule } from '../src/verdicts/claim-rule';

export default claimRule({
  id: 'figure-of-merit',
  claim: 'fom',
  noun: 'figure of merit',
  description: 'The claimed figure of merit GBW·CL/I matches the exact gain-bandwidth, the load and the supply current.',
});
