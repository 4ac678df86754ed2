// The review sheet of one block: plain data (it crosses from a worker thread
// to the writer), made right after the check from the statements judged there
// and the findings. Every judged statement is a row, holding ones included, so
// the text report can show the whole block at a glance.

import type { Finding } from '../verdicts/findings';
import type { FileResult } from '../check';
import { conditionsText } from '../model/evaluation';
import { formatLike } from '../quantity';
import { describeTolerance, judge, offBy, toleranceFor } from '../verdicts/verdict';

export interface SheetRow {
  key: string;
  /** A table row's label and its own conditions ("Phase margin, CL = 20 pF"), or '' for the front matter. */
  where: string;
  /** As written, with its bound: "≥ 60 deg", "21 MHz". */
  stated: string;
  /** The model's figure, in the unit the claim was written in: "48.7 deg", or "none" and why. */
  model: string;
  /** "11.3° short (±3°)", "4 % high (±10 %)". */
  deviation: string;
  outcome: 'fails' | 'thin' | 'holds';
  /** The worst point of the ranges, for a bound judged there. */
  at?: string;
  line: number;
  column: number;
  waived?: string;
}

export interface Sheet {
  block: string;
  title?: string;
  topology: string;
  /** The front matter's operating point: "cl = 5.00 pF, β = 1". */
  point: string;
  /** The closed loop's verdict at that point, for a topology in a loop. */
  stability?: 'stable' | 'unstable' | 'unknown';
  rows: SheetRow[];
}

export function sheetOf(r: FileResult): Sheet | undefined {
  const spec = r.spec;
  if (!spec || !r.points?.length) return undefined;
  const front = r.points[0].context;
  const inLoop = spec.topology.conditions.some((c) => c.key === 'beta');
  const rows: SheetRow[] = [];
  // Findings by statement, so that a sheet of many rows is made in linear time.
  const byPlace = new Map<string, Finding>();
  for (const f of r.findings) {
    const k = `${f.claim}:${f.line}:${f.column}:${f.verdict?.bound}`;
    if (!byPlace.has(k)) byPlace.set(k, f);
  }
  for (const j of r.statements ?? []) {
    const e = j.entry;
    const q = e[j.verdict.bound]!;
    const kind = e.spec.kind;
    const pos = e.source === 'table' ? q.pos : e.keyPos;
    const t = toleranceFor(kind, front.tolerances);
    const fig = j.value;
    // The finding of this statement, if any, decided its outcome (a waived one is listed as such).
    const own = byPlace.get(`${e.key}:${pos.line}:${pos.column}:${j.verdict.bound}`);
    const outcome = own?.verdict?.outcome ?? (j.verdict.outcome === 'fails' ? 'fails' : 'holds');
    // A figure that does not exist yet holds is an unbounded one (a gain margin nothing limits, no right-half-plane zero).
    const model = fig !== null ? formatLike(fig, q.quantity.written, kind) : outcome === 'holds' ? (e.key === 'rhp_zero' ? 'none in the right half-plane' : 'unbounded') : 'none';
    const v = judge({ ...e, typ: j.verdict.bound === 'typ' ? e.typ : undefined, min: j.verdict.bound === 'min' ? e.min : undefined, max: j.verdict.bound === 'max' ? e.max : undefined }, fig, undefined, t)[0];
    const deviation = fig === null ? (j.stability !== 'stable' && j.stability !== 'open-loop' && (e.key === 'phase_margin' || e.key === 'gain_margin') ? 'loop not stable' : 'no figure') : `${offBy(v, fig, kind, t)} (${describeTolerance(t, kind)})`;
    rows.push({
      key: e.key,
      where: e.source === 'table' ? `${e.label ?? e.key}${e.conditions ? `, ${e.conditions.text}` : ''}` : '',
      stated: `${j.verdict.bound === 'min' ? '≥ ' : j.verdict.bound === 'max' ? '≤ ' : ''}${q.quantity.written.text}`,
      model,
      deviation,
      outcome,
      ...(j.label !== 'typical' ? { at: j.label } : {}),
      line: pos.line,
      column: pos.column,
      ...(own?.waived ? { waived: own.waived.reason } : {}),
    });
  }
  return {
    block: spec.block ?? spec.path,
    ...(spec.title ? { title: spec.title } : {}),
    topology: spec.topology.id,
    point: conditionsText(spec, front.model.values),
    ...(inLoop ? { stability: front.model.loop.stability } : {}),
    rows,
  };
}
