import { claimRule } from '../src/verdicts/claim-rule';

export default claimRule({
  id: 'rhp-zero',
  claim: 'rhp_zero',
  noun: 'right-half-plane zero',
  description: 'The claimed right-half-plane zero matches the exact zeros of the network.',
});
