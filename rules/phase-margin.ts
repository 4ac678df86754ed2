import { claimRule } from '../src/verdicts/claim-rule';

export default claimRule({
  id: 'phase-margin',
  claim: 'phase_margin',
  noun: 'phase margin',
  description: 'The claimed phase margin holds for the loop gain β·A of the exact network.',
});
