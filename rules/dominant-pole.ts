import { claimRule } from '../src/verdicts/claim-rule';

export default claimRule({
  id: 'dominant-pole',
  claim: 'p1',
  noun: 'dominant pole',
  description: 'The claimed dominant pole matches the lowest pole of the exact network.',
});
