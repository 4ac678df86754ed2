import { claimRule } from '../src/verdicts/claim-rule';

export default claimRule({
  id: 'gain-margin',
  claim: 'gain_margin',
  noun: 'gain margin',
  description: 'The claimed gain margin holds for the loop gain β·A of the exact network.',
});
