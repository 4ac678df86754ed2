// The finding: what every rule and every reader diagnostic produces, and
// what every report writer consumes.

import type { Figure } from '../engine/figure';

export type Severity = 'error' | 'warning' | 'note';

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
  /** For a claim: the verdict, decided once by its rule; every reader takes it from here. */
  verdict?: ClaimVerdict;
  /** The structured form of the suggestions (SPEC-FORMAT §4); `suggestions` is rendered from these. */
  fixes?: Fix[];
}

/** One statement of a claim (its typ, min or max) judged at one operating point. */
export interface ClaimVerdict {
  bound: 'typ' | 'min' | 'max';
  outcome: 'holds' | 'thin' | 'fails';
  /** As written, in the canonical unit. */
  stated: number;
  /** The model's figure where the statement is judged (the worst point of the box for a bound); null when it does not exist. */
  computed: number | null;
  /** computed − stated, canonical unit (null with computed). */
  deviation: number | null;
  tolerance: { value: number; relative: boolean };
  /** Where it is judged: "typical" or the worst point of the box, with the conditions in force. */
  at: { label: string; conditions: string; values: Record<string, number> };
  /** The closed loop's verdict at that point; 'open-loop' for a block not used in a loop. */
  stability: 'stable' | 'unstable' | 'unknown' | 'open-loop';
}

/** A text edit: 1-based line and column, endColumn exclusive; start/end are offsets in the text as read (BOM excluded). */
export interface TextEdit {
  line: number;
  column: number;
  endLine: number;
  endColumn: number;
  start: number;
  end: number;
  text: string;
}

export type Fix =
  | { kind: 'restate'; text: string; bound: 'typ' | 'min' | 'max'; edit: TextEdit | null; refused?: string }
  | {
      kind: 'design';
      text: string;
      /** New param values in SI units, exactly as printed. */
      changes: Record<string, number>;
      /** Each claim's figure at the front matter's operating point with the change (canonical units). */
      gives: Record<string, number | null>;
      /** The closed loop with the change, at every operating point. */
      stable: boolean;
      /** Every claim of the spec (table rows at their own conditions, bounds at their worst case) holds. */
      meetsAll: boolean;
      breaks: Array<{ claim: string; line: number; value: number | null }>;
    }
  | { kind: 'none'; text: string; knobs: string[]; range: Record<string, [number, number]> };

export const bySeverity: Record<Severity, number> = { error: 0, warning: 1, note: 2 };

/**
 * Rule ids (lowercase letters, digits, hyphens) in code-unit order, which for
 * such ids is the order localeCompare gives; unlike localeCompare it does not
 * load the ICU collator (about 8 ms of every cold start).
 */
export const byCodeUnit = (a: string, b: string): number => (a < b ? -1 : a > b ? 1 : 0);

export function sortFindings(findings: Finding[]): Finding[] {
  return findings.sort((a, b) => a.line - b.line || a.column - b.column || bySeverity[a.severity] - bySeverity[b.severity] || byCodeUnit(a.rule, b.rule));
}
