import { claimRule } from '../src/verdicts/claim-rule';

export default claimRule({
  id: 'settling-time',
  claim: 'settling_time',
  noun: 'settling time',
  description: 'The claimed settling time matches the last exit from the band of the exact step response, with slewing for a stated step.',
});
