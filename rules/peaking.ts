import { claimRule } from '../src/verdicts/claim-rule';

export default claimRule({
  id: 'peaking',
  claim: 'peaking',
  noun: 'peaking',
  description: 'The claimed peaking matches the rise of the exact closed-loop magnitude above its DC value.',
});
