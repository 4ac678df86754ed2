// The catalogue of reader diagnostics: the ids that findings about the input
// itself carry (reading, parsing, schema, model, waivers), with what each
// reports. One list for every consumer: the SARIF rule descriptors, the ids a
// waiver may name, `explain`.

import type { Severity } from './verdicts/findings';

/** The ids that input findings carry (reading, parsing, schema, model, waivers), with what they report; `waivable` when a waiver may accept one. */
export const INPUT_DIAGNOSTICS: readonly { id: string; name: string; description: string; severity: Severity; waivable: boolean }[] = [
  { id: 'yaml-syntax', name: 'YamlSyntax', severity: 'error', description: 'The front matter is not valid YAML.', waivable: true },
  { id: 'front-matter', name: 'FrontMatter', severity: 'error', description: 'The front matter does not have the shape of a spec (required keys, mappings, lists).', waivable: true },
  { id: 'unknown-key', name: 'UnknownKey', severity: 'error', description: 'A key that the spec format or the topology does not know.', waivable: true },
  { id: 'wrong-unit', name: 'WrongUnit', severity: 'error', description: 'A value whose unit does not fit its key.', waivable: true },
  { id: 'invalid-value', name: 'InvalidValue', severity: 'error', description: 'A value that cannot be read as a quantity, range or bound, or lies outside what its key allows.', waivable: true },
  { id: 'missing-value', name: 'MissingValue', severity: 'error', description: 'A key without a value.', waivable: true },
  { id: 'expression', name: 'ExpressionProblem', severity: 'error', description: 'A value written as an expression that cannot be read or computed (a construct outside the expression whitelist, a cycle of expressions), or, as a note, a 1/s result read as rad/s.', waivable: true },
  { id: 'design', name: 'DesignQuantityProblem', severity: 'error', description: 'A design quantity whose name cannot be used (it shadows a unit or a function) or that is also given under params or conditions.', waivable: true },
  { id: 'missing-param', name: 'MissingParam', severity: 'error', description: 'A param the topology needs is not given.', waivable: true },
  { id: 'network', name: 'UnsolvableNetwork', severity: 'error', description: 'The small-signal model cannot be solved, or a user-defined network is malformed.', waivable: true },
  { id: 'table', name: 'UncheckedTableContent', severity: 'note', description: 'A datasheet table row or condition that is not checked.', waivable: true },
  { id: 'waiver', name: 'WaiverProblem', severity: 'error', description: 'A waiver that names an unknown rule, lacks its reason, has expired or matches no finding.', waivable: false },
  { id: 'read-error', name: 'ReadError', severity: 'error', description: 'The file cannot be read.', waivable: false },
  { id: 'encoding', name: 'InvalidEncoding', severity: 'error', description: 'The file is not valid UTF-8.', waivable: false },
  { id: 'file-too-large', name: 'FileTooLarge', severity: 'error', description: 'The file is larger than the size limit (--max-bytes).', waivable: false },
];

/** Ids of input findings that a waiver may accept. */
export const INPUT_RULE_IDS: readonly string[] = INPUT_DIAGNOSTICS.filter((d) => d.waivable).map((d) => d.id);
