import { claimRule } from '../src/verdicts/claim-rule';

export default claimRule({
  id: 'slew-rate',
  claim: 'slew_rate',
  noun: 'slew rate',
  description: 'The claimed slew rate matches the large-signal limit set by the bias currents and capacitances.',
});
