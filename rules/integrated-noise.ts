import { claimRule } from '../src/verdicts/claim-rule';

export default claimRule({
  id: 'integrated-noise',
  claim: 'integrated_noise',
  noun: 'integrated noise',
  description: 'The claimed rms noise matches the exact noise density integrated over the band, or the output noise of the closed loop over all frequencies.',
});
