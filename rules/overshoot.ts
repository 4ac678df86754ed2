import { claimRule } from '../src/verdicts/claim-rule';

export default claimRule({
  id: 'overshoot',
  claim: 'overshoot',
  noun: 'overshoot',
  description: 'The claimed overshoot matches the exact small-signal step response of the closed loop.',
});
