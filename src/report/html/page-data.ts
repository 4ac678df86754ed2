// One block's review page as plain data, made right after the check from the
// models (in the thread that checked the file): the claims with their figures
// and verdicts, the curves the plots draw (sampled by src/model/curves.ts, the
// engine's own evaluations), the roots, and the derivation of every figure.
// It crosses to the writer as JSON; the writer only lays it out.

import type { FileResult } from '../../check';
import { closedLoopCurve, frequencySpan, type BodePoint, logGrid, loopGainCurve, noiseCurve, openLoopCurve, stepCurve } from '../../model/curves';
import { conditionsText } from '../../model/evaluation';
import type { Figure } from '../../engine/figure';
import { type Root, rootHz } from '../../engine/roots';
import type { Model } from '../../model/model';
import { inLoop } from '../../verdicts/places';
import { formatFigure, formatQuantity } from '../../quantity';
import type { Kind } from '../../quantity/units';
import { claimResults } from '../../verdicts/results';
import { INPUT_NOISE_AT } from '../../topologies/common';
import { claimedText, handError } from '../review';

export interface ClaimRow {
  key: string;
  /** "front matter", or the table row's label with its own conditions. */
  where: string;
  stated: string;
  /** The model's figure per statement: "24.9 MHz, min 19.4 MHz". */
  exact: string;
  /** The typical figure in the canonical unit (null: none), for machines. */
  exactValue: number | null;
  unit: string;
  worst: string;
  hand: string;
  handError: string;
  verdict: 'holds' | 'thin' | 'fails';
  line: number;
  column: number;
  waivers: Array<{ reason: string; expires?: string }>;
  /** Restatements and design changes of the failing statements, as the text report words them. */
  fixes: string[];
}

export interface RootRow {
  /** Real and imaginary part, Hz (s/2π). */
  re: number;
  im: number;
  /** |s|/2π. */
  hz: number;
  q?: number;
}

export interface Marker {
  f: number;
  label: string;
}

export interface NoiseMarker extends Marker {
  /** V/√Hz. */
  value: number;
}

export interface BodeData {
  open: BodePoint[];
  loop?: BodePoint[];
  closed?: BodePoint[];
  closedWhy?: string;
  beta?: number;
  /** The worst corner of a ranged spec, for the loop (or A): its label and curves. */
  corner?: { label: string; open: BodePoint[]; loop?: BodePoint[] };
  /** A's unity-gain frequency and the loop's crossover with its phase there and the margin. */
  unity?: number;
  crossover?: { f: number; deg: number; pm: number };
  gainMargin?: { f: number; db: number };
  /** Stated claims drawn on the plots. */
  claimedGbw: Marker[];
  claimedPm: Array<{ deg: number; label: string }>;
  claimedGm: Array<{ db: number; label: string }>;
  claimedBw: Marker[];
}

export interface StepData {
  points: Array<{ t: number; y: number }>;
  band: number;
  overshoot?: { value: number; t: number };
  /** The small-signal settling time, and the settling time with slewing where a step is stated. */
  settling?: number;
  largeSettling?: { t: number; how: string };
}

export interface Derivation {
  key: string;
  claimed: boolean;
  exact: string;
  method: string;
  how: string;
  notes: string[];
  hand?: { value: string; how: string; notes: string[]; where?: string };
}

export interface BlockPage {
  /** The page's file name in the output folder. */
  file: string;
  path: string;
  block: string;
  title: string;
  topology: string;
  topologyTitle: string;
  point: string;
  stability?: string;
  counts: { fails: number; thin: number; holds: number };
  rows: ClaimRow[];
  /** Why the block has no model (input errors), instead of the rest. */
  error?: string;
  bode?: BodeData;
  poles: RootRow[];
  zeros: RootRow[];
  closedPoles: RootRow[];
  step?: StepData;
  stepWhy?: string;
  noise?: { points: Array<{ f: number; density: number }>; claimed: NoiseMarker[] };
  derivations: Derivation[];
  caveats: string[];
  notes: string[];
}

const TWO_PI = 2 * Math.PI;

const rootRow = (r: Root): RootRow => {
  const row: RootRow = { re: r.re / TWO_PI, im: r.im / TWO_PI, hz: rootHz(r) };
  if (r.im !== 0) row.q = Math.hypot(r.re, r.im) / (2 * Math.abs(r.re));
  return row;
};

const KIND_OF_UNIT: Record<string, Kind> = { Hz: 'frequency', dB: 'gain', deg: 'angle', 'V/s': 'slew', s: 'time', 'V/√Hz': 'noise', V: 'voltage', A: 'current', W: 'power' };

function figureText(f: Figure | undefined, kind: Kind | undefined): string {
  if (!f) return '—';
  if (f.value === null) return f.unbounded ? 'unbounded' : `none: ${f.reason ?? 'no figure'}`;
  if (f.unit === 'ratio') return `${+(100 * f.value).toPrecision(3)} %`;
  if (f.unit === 'V/V') return `${+f.value.toPrecision(4)} V/V`;
  if (f.unit === 'MHz·pF/mA') return `${+f.value.toPrecision(3)} MHz·pF/mA`;
  const k = kind ?? KIND_OF_UNIT[f.unit];
  return k ? formatFigure(f.value, k) : `${+f.value.toPrecision(4)} ${f.unit}`;
}

/** A file name for the block's page: its id in safe characters, unique among `taken`. */
export function pageName(block: string, taken: Set<string>): string {
  const base = block.toLowerCase().replace(/[^a-z0-9._-]+/g, '-').replace(/^[-.]+|-+$/g, '') || 'block';
  let name = `${base}.html`;
  for (let i = 2; taken.has(name) || name === 'index.html'; i++) name = `${base}-${i}.html`;
  taken.add(name);
  return name;
}

/** The page data of one checked file, or undefined for a page that is not a spec. */
export function pageData(r: FileResult): Omit<BlockPage, 'file'> | undefined {
  if (r.skipped) return undefined;
  const base = { path: r.path, poles: [], zeros: [], closedPoles: [], derivations: [], caveats: [], notes: [], rows: [], counts: { fails: 0, thin: 0, holds: 0 } };
  if (!r.spec || !r.model) {
    const errors = r.findings.filter((f) => f.severity === 'error').map((f) => `${r.path}:${f.line}:${f.column} ${f.message}`);
    return { ...base, block: r.spec?.block ?? r.path, title: r.spec?.title ?? '', topology: r.spec?.topology.id ?? '', topologyTitle: r.spec?.topology.title ?? '', point: '', error: errors.join('\n') || 'no model' };
  }
  const { spec, model } = r;
  const kindOf = (key: string): Kind | undefined => spec.topology.claims.find((c) => c.key === key)?.kind;
  const rows: ClaimRow[] = [];
  for (const x of claimResults(r)) {
    const e = x.entry;
    const kind = e.spec.kind;
    const show = (v: number | null, f: Figure | undefined) => (v === null ? (f?.unbounded ? 'unbounded' : 'none') : formatFigure(v, kind));
    const places = e.source === 'table' ? [e.typ, e.min, e.max].filter(Boolean).map((q) => q!.pos) : [e.keyPos];
    const cells = new Set(places.map((q) => `${q.line}:${q.column}`));
    const own = r.findings.filter((f) => f.claim === e.key && f.verdict && cells.has(`${f.line}:${f.column}`));
    const pos = e.source === 'table' ? places[0] : e.keyPos;
    const typFig = x.point.context.model.exact[e.key];
    rows.push({
      key: e.key,
      where: e.source === 'table' ? `${e.label ?? e.key}${e.conditions ? `, ${e.conditions.text}` : ''}` : 'front matter',
      stated: claimedText(e),
      exact: x.bounds.map((b) => `${b.bound === 'typ' ? '' : `${b.bound} `}${show(b.value, b.figure)}`).join(', '),
      exactValue: typFig?.value ?? null,
      unit: typFig?.unit ?? '',
      worst: x.bounds.filter((b) => b.bound !== 'typ').map((b) => `${b.bound}: ${b.corner}`).join('; ') || '—',
      hand: x.hand ? show(x.hand.value, x.hand) : '—',
      handError: handError(x.hand, typFig, typFig?.unit ?? 'Hz'),
      verdict: x.verdict,
      line: pos.line,
      column: pos.column,
      waivers: own.filter((f) => f.waived).map((f) => ({ reason: f.waived!.reason, ...(f.waived!.expires ? { expires: f.waived!.expires } : {}) })),
      fixes: own.filter((f) => f.verdict!.outcome !== 'holds').flatMap((f) => f.suggestions),
    });
  }
  // Counted by statement (a typ and a bound of one claim are two), as the text report's tally counts them.
  const counts = { fails: 0, thin: 0, holds: 0 };
  for (const row of r.sheet?.rows ?? []) counts[row.outcome]++;
  const loop = inLoop(spec);
  const page: Omit<BlockPage, 'file'> = {
    ...base,
    block: spec.block ?? spec.path,
    title: spec.title ?? spec.topology.title,
    topology: spec.topology.id,
    topologyTitle: spec.topology.title,
    point: conditionsText(spec, model.values),
    ...(loop ? { stability: model.loop.stability } : {}),
    counts,
    rows,
    poles: model.analysis.poles.map(rootRow),
    zeros: model.analysis.zeros.map(rootRow),
    closedPoles: loop ? model.loop.closedLoopPoles.map(rootRow) : [],
    caveats: [...model.caveats],
    notes: r.findings.filter((f) => f.claim === null || !spec.topology.claims.some((c) => c.key === f.claim)).map((f) => `${f.severity} ${r.path}:${f.line}:${f.column} ${f.message} (${f.rule})`),
  };
  page.bode = bodeData(r, model, loop);
  // A large-signal settling time (a stated step, slewing first) is drawn on the same axis: the span reaches past it.
  const ts = loop ? model.exact.settling_time : undefined;
  const large = ts?.value != null && ts.method === 'transient' ? ts.value : 0;
  const step = loop ? stepCurve(model, 240, 1.15 * large) : 'the block is not used in a closed loop';
  if (typeof step === 'string') page.stepWhy = step;
  else {
    const s: StepData = { ...step };
    // Placed on the curve drawn, labelled with the engine's figure.
    const os = stepOvershoot(step.points);
    const o = model.exact.overshoot;
    if (os && o?.value != null && o.value > 0) s.overshoot = { value: o.value, t: os.t };
    if (large) s.largeSettling = { t: large, how: ts!.notes?.[1] ?? ts!.how };
    page.step = s;
  }
  if (page.bode) {
    const n = noiseCurve(model, logGrid(page.bode.open[0].f, page.bode.open[page.bode.open.length - 1].f, 16));
    if (n) {
      const claimed: NoiseMarker[] = [];
      for (const e of spec.claims.filter((c) => c.key === 'input_noise')) {
        const at = r.points?.find((p) => p.claims.includes(e))?.context.model.values[INPUT_NOISE_AT];
        for (const b of ['typ', 'min', 'max'] as const) {
          const q = e[b];
          if (q) claimed.push({ f: at ?? n[0].f, value: q.quantity.value, label: `claimed ${b === 'typ' ? '' : b === 'min' ? '≥ ' : '≤ '}${q.quantity.written.text}${at ? '' : ' (white floor)'}` });
        }
      }
      page.noise = { points: n, claimed };
    }
  }
  page.derivations = Object.keys(model.exact).map((key) => {
    const f = model.exact[key];
    const h = model.hand[key];
    const d: Derivation = { key, claimed: spec.claims.some((c) => c.key === key), exact: figureText(f, kindOf(key)), method: f.method, how: f.how, notes: [...(f.notes ?? []), ...(f.reason && f.value !== null ? [f.reason] : [])] };
    if (h) {
      d.hand = { value: figureText(h, kindOf(key)), how: h.how, notes: [...(h.notes ?? [])] };
      const where = substituted(h.how, spec.topology, model.values);
      if (where) d.hand.where = where;
    }
    return d;
  });
  return page;
}

/** The values of the params and conditions a formula names ("gm1 = 120 µS, cc = 800 fF"), as the model used them. */
function substituted(how: string, topology: Model['topology'], values: Model['values']): string {
  const out: string[] = [];
  for (const k of [...topology.params, ...topology.conditions]) {
    if (values[k.key] === undefined || out.some((x) => x.startsWith(`${k.key} = `))) continue;
    const esc = k.key.replace(/[.*+?^${}()|[\]\\]/g, '\\$&');
    const named = new RegExp(`(?<![\\w'])${esc}(?![\\w'])`).test(how) || (k.key === 'beta' && how.includes('β'));
    if (named) out.push(`${k.key} = ${k.key === 'beta' ? +values[k.key].toPrecision(4) : formatQuantity(values[k.key], k.kind)}`);
  }
  return out.join(', ');
}

/** The largest y − 1 of the sampled step and its time (the figure itself is the engine's; this places its marker on the curve drawn). */
function stepOvershoot(points: StepData['points']): StepData['overshoot'] | undefined {
  let best: { t: number; y: number } | undefined;
  for (const p of points) if (p.y > 1 && (!best || p.y > best.y)) best = p;
  return best ? { value: best.y - 1, t: best.t } : undefined;
}

function bodeData(r: FileResult, model: Model, loop: boolean): BodeData | undefined {
  const { from, to } = frequencySpan(model);
  const l = model.loop;
  const unity = l.unityGain.value ?? undefined;
  const extra = [...(unity ? [unity] : []), ...(loop ? l.crossoversHz : [])];
  const grid = logGrid(from, to, 24, extra);
  const open = openLoopCurve(model.analysis, grid);
  if (open.length < 2) return undefined;
  const data: BodeData = { open, claimedGbw: [], claimedPm: [], claimedGm: [], claimedBw: [] };
  if (unity) data.unity = unity;
  if (loop) {
    data.beta = model.beta;
    data.loop = loopGainCurve(open, model.beta);
    const closed = closedLoopCurve(model, grid);
    if (typeof closed === 'string') data.closedWhy = closed;
    else data.closed = closed;
    const pm = l.phaseMargin.value;
    if (pm !== null && l.crossoversHz.length) {
      const i = l.crossoverMarginsDeg.indexOf(Math.min(...l.crossoverMarginsDeg));
      const fc = l.crossoversHz[i];
      data.crossover = { f: fc, deg: model.analysis.at(fc).phaseDeg, pm };
    }
    const gm = l.gainMargin.value;
    if (gm !== null) {
      const at = l.phaseCrossings.find((c) => Math.abs(-c.loopDb - gm) < 1e-9);
      if (at && at.fHz > 0) data.gainMargin = { f: at.fHz, db: gm };
    }
  }
  // The worst corner of the ranges for the first bound on a loop figure (else any bound judged at a corner).
  const judged = (r.statements ?? []).filter((j) => j.label !== 'typical' && j.point === r.points?.[0]);
  const pick = judged.find((j) => ['phase_margin', 'gbw', 'gain_margin'].includes(j.entry.key)) ?? judged[0];
  if (pick) {
    const m = r.context?.withChanges(pick.values);
    if (m) {
      const co = openLoopCurve(m.analysis, grid);
      data.corner = { label: `${pick.label} (worst corner of ${pick.entry.key} ${pick.verdict.bound})`, open: co, ...(loop ? { loop: loopGainCurve(co, m.beta) } : {}) };
    }
  }
  const front = r.points?.[0];
  const seen = new Set<string>();
  for (const e of r.spec!.claims) {
    if (!front?.claims.includes(e)) continue;
    for (const b of ['typ', 'min', 'max'] as const) {
      const q = e[b];
      if (!q) continue;
      const label = `claimed ${e.key} ${b === 'typ' ? '' : b === 'min' ? '≥ ' : '≤ '}${q.quantity.written.text}`;
      const v = q.quantity.value;
      // The same statement in the front matter and a table is drawn once.
      if (seen.has(`${e.key} ${b === 'typ' ? '' : b} ${v}`)) continue;
      seen.add(`${e.key} ${b === 'typ' ? '' : b} ${v}`);
      if (e.key === 'gbw') data.claimedGbw.push({ f: v, label });
      else if (e.key === 'phase_margin') data.claimedPm.push({ deg: v, label });
      else if (e.key === 'gain_margin') data.claimedGm.push({ db: v, label });
      else if (e.key === 'closed_loop_bandwidth') data.claimedBw.push({ f: v, label });
    }
  }
  return data;
}
