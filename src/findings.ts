// The finding: what every rule and every reader diagnostic produces, and
// what every report writer consumes.

import type { Figure } from './engine/figure';

export type Severity = 'error' | 'warning' | 'info';

export interface Related {
  line: number;
  column: number;
  message: string;
}

export interface Finding {
  rule: string;
  severity: Severity;
  line: number;
  column: number;
  /** The claim key, or null for findings that are not about a claim. */
  claim: string | null;
  /** Bounds or typical value as claimed, in the canonical unit. */
  claimed?: { typ?: number; min?: number; max?: number };
  /** The model's figure in the canonical unit (Hz, deg, dB, V/s), or null if it does not exist. */
  computed?: number | null;
  unit?: string;
  message: string;
  suggestions: string[];
  /** Places that take part (the param that causes it, the other statement of a conflict). */
  related?: Related[];
  /** How the computed figure was obtained. */
  derivation?: Pick<Figure, 'method' | 'how' | 'notes'>;
  /** An accepted deviation: the finding is listed but counts neither as an error nor as a warning. */
  waived?: { reason: string; expires?: string; line: number };
}

export const bySeverity: Record<Severity, number> = { error: 0, warning: 1, info: 2 };

export function sortFindings(findings: Finding[]): Finding[] {
  return findings.sort((a, b) => a.line - b.line || a.column - b.column || bySeverity[a.severity] - bySeverity[b.severity] || a.rule.localeCompare(b.rule));
}
