import { claimRule } from '../src/verdicts/claim-rule';

export default claimRule({
  id: 'power',
  claim: 'power',
  noun: 'power',
  description: 'The claimed power matches the stated bias currents times the supply voltage.',
});
