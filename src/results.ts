// Per-claim results for the reviewer report: the figure each statement is
// judged against (typical point, or the worst corner of a bound) and its
// verdict, from the same computations the rules made (worstCase is memoized).

import type { FileResult, OperatingPoint } from './check';
import type { Figure } from './engine/figure';
import type { ClaimEntry } from './spec/types';
import { worstCase } from './worst-case';

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
      const bounds: BoundResult[] = [];
      if (entry.typ) {
        const f = ctx.model.exact[entry.key];
        bounds.push({ bound: 'typ', value: f?.value ?? null, figure: f, corner: 'typical' });
      }
      for (const b of ['min', 'max'] as const) {
        if (!entry[b]) continue;
        const w = worstCase(ctx, entry.key, b);
        bounds.push({ bound: b, value: w.value, figure: w.figure, corner: w.label });
      }
      // The statement's own findings are those of its claim at its cells.
      const places = entry.source === 'table' ? [entry.typ, entry.min, entry.max].filter(Boolean).map((q) => q!.pos) : [entry.keyPos];
      const cells = new Set(places.map((q) => `${q.line}:${q.column}`));
      const own = r.findings.filter((f) => f.claim === entry.key && cells.has(`${f.line}:${f.column}`) && f.rule !== 'hand-estimate-drift');
      const verdict = own.some((f) => f.severity === 'error') ? 'fails' : own.some((f) => f.severity === 'warning') ? 'thin' : 'holds';
      out.push({ entry, point, bounds, hand: ctx.model.hand[entry.key], verdict });
    }
  }
  return out;
}
