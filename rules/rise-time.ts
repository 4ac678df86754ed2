import { claimRule } from '../src/verdicts/claim-rule';

export default claimRule({
  id: 'rise-time',
  claim: 'rise_time',
  noun: 'rise time',
  description: 'The claimed 10–90 % rise time matches the exact small-signal step response of the closed loop.',
});
