import { claimRule } from '../src/verdicts/claim-rule';

export default claimRule({
  id: 'second-pole',
  claim: 'p2',
  noun: 'second pole',
  description: 'The claimed second pole matches the second-lowest pole of the exact network.',
});
