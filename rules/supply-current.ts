import { claimRule } from '../src/verdicts/claim-rule';

export default claimRule({
  id: 'supply-current',
  claim: 'supply_current',
  noun: 'supply current',
  description: 'The claimed supply current matches the sum of the stated bias currents.',
});
