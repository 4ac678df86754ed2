import { claimRule } from '../src/verdicts/claim-rule';

export default claimRule({
  id: 'input-capacitance',
  claim: 'input_capacitance',
  noun: 'input capacitance',
  description: 'The claimed input capacitance matches the low-frequency capacitance the exact network shows at its input (Miller effect included).',
});
