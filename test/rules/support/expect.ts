// Exact expectations on the findings of one rule: rule id, severity, line and
// column (found in the spec text by the builder, not by the tool), claim key,
// and the computed figure against an independent value.

import { expect } from 'vitest';
import type { Finding } from '../../../src/verdicts/findings';
import type { Checked } from './spec';

export interface Expected {
  severity: 'error' | 'warning';
  /**
   * Where the finding points: a claim (at its key, as SPEC-FORMAT §4 says for
   * front-matter claims, whichever bound fails), a claim's key, a param's value, or `params:`.
   */
  at:
    | { claim: string; needle?: string }
    | { claimKey: string }
    | { param: string; needle?: string }
    | { top: 'params' };
  /** The `claim` field; defaults to the claim of `at` (null for params). */
  claim?: string | null;
  /** Expected figure in the canonical unit, or null when the figure does not exist. */
  computed?: number | null;
  /** Tolerance on `computed`: relative unless `absolute` (default 1e-9 relative). */
  within?: number;
  absolute?: boolean;
  claimed?: { typ?: number; min?: number; max?: number };
  /** Substrings the message must contain. */
  says?: string[];
}

const show = (f: Finding): string => `${f.line}:${f.column} ${f.severity} ${f.rule} [${f.claim}] ${f.message}`;

export function expectFindings(r: Checked, rule: string, expected: Expected[]): Finding[] {
  const got = r.of(rule);
  expect(got.map(show), `findings of ${rule}`).toHaveLength(expected.length);
  // Findings come sorted by position; sort the expectations the same way.
  const placed = expected.map((e) => {
    const a = e.at;
    const pos = 'claim' in a ? r.keyAt('claims', a.claim) : 'claimKey' in a ? r.keyAt('claims', a.claimKey) : 'param' in a ? r.at('params', a.param, a.needle) : r.topAt(a.top);
    const claim = e.claim !== undefined ? e.claim : 'claim' in a ? a.claim : 'claimKey' in a ? a.claimKey : null;
    return { e, pos, claim };
  });
  placed.sort((x, y) => x.pos.line - y.pos.line || x.pos.column - y.pos.column);
  got.forEach((f, i) => {
    const { e, pos, claim } = placed[i];
    const label = show(f);
    expect({ rule: f.rule, severity: f.severity, line: f.line, column: f.column, claim: f.claim }, label).toEqual({ rule, severity: e.severity, line: pos.line, column: pos.column, claim });
    if (e.computed === null) expect(f.computed, label).toBeNull();
    else if (e.computed !== undefined) {
      expect(typeof f.computed, label).toBe('number');
      const tol = e.within ?? 1e-9;
      const err = e.absolute ? Math.abs(f.computed! - e.computed) : Math.abs(f.computed! - e.computed) / Math.abs(e.computed);
      expect(err, `${label}: computed ${f.computed} vs expected ${e.computed}`).toBeLessThanOrEqual(tol);
    }
    if (e.claimed) {
      for (const [k, v] of Object.entries(e.claimed)) {
        const c = f.claimed?.[k as 'typ'];
        expect(typeof c, `${label}: claimed.${k}`).toBe('number');
        expect(Math.abs(c! - v) / Math.max(Math.abs(v), 1e-300), `${label}: claimed.${k} ${c} vs ${v}`).toBeLessThan(1e-12);
      }
    }
    for (const s of e.says ?? []) expect(f.message, label).toContain(s);
  });
  return got;
}
