// Per-claim results for the reviewer report: the figure each statement is
// judged against (typical point, or the worst corner of a bound) and its
// verdict, from the same computations the rules made (worstCase is memoized).

import type { FileResult, OperatingPoint } from '../check';
import type { Figure } from '../engine/figure';
import type { ClaimEntry } from '../spec/types';

export interface BoundResult {
  bound: 'typ' | 'min' | 'max';
  value: number | null;
  figure: Figure | undefined;
  /** The corner that decides a bound ("typical" for typ). */
  corner: string;
}

export interface ClaimResult {
  entry: ClaimEntry;
  point: OperatingPoint;
  bounds: BoundResult[];
  hand: Figure | undefined;
  verdict: 'holds' | 'thin' | 'fails';
}

export function claimResults(r: FileResult): ClaimResult[] {
  const out: ClaimResult[] = [];
  for (const point of r.points ?? []) {
    const ctx = point.context;
    for (const entry of point.claims) {
      // The figures each statement was judged against, as the check computed them.
      const mine = (r.statements ?? []).filter((j) => j.entry === entry && j.point === point);
      const bounds: BoundResult[] = mine.map((j) => ({
        bound: j.verdict.bound,
        value: j.value,
        figure: j.verdict.bound === 'typ' ? ctx.model.exact[entry.key] : ctx.withChanges(j.values)?.exact[entry.key],
        corner: j.label,
      }));
      // The statement's verdict is its findings' (the claim rules decided it): none means it holds.
      const places = entry.source === 'table' ? [entry.typ, entry.min, entry.max].filter(Boolean).map((q) => q!.pos) : [entry.keyPos];
      const cells = new Set(places.map((q) => `${q.line}:${q.column}`));
      const own = r.findings.filter((f) => f.claim === entry.key && f.verdict && cells.has(`${f.line}:${f.column}`));
      const verdict = own.some((f) => f.verdict!.outcome === 'fails') ? 'fails' : own.some((f) => f.verdict!.outcome === 'thin') ? 'thin' : 'holds';
      out.push({ entry, point, bounds, hand: ctx.model.hand[entry.key], verdict });
    }
  }
  return out;
}
