// The plots of a block page, drawn to SVG text by Observable Plot into a
// linkedom document: Bode magnitude and phase, pole-zero map, step response,
// noise density. Pure layout of the page data (every number was computed by
// the engine); coordinates are rounded so two runs write the same bytes.
// Colours are CSS classes (see page.ts), so dark mode and print restyle them.

import { formatQuantity } from '../../quantity';
import type { Kind } from '../../quantity/units';
import type * as Libs from './libs';
import type { BlockPage, BodeData, RootRow, StepData } from './page-data';

type PlotLib = typeof Libs.Plot;
type Markish = Parameters<PlotLib['plot']>[0] extends infer O ? (O extends { marks?: infer M } ? M : never) : never;

export const WIDTH = 720;
const HEIGHT = 250;

/** A tick label with an SI prefix and no trailing zeros: 20 ns, 1.5 µs, −10 MHz. */
export const si = (kind: Kind) => (v: number): string => (v === 0 ? '0' : formatQuantity(v, kind, 3).replace(/(\.\d*?)0+(?= )/, '$1').replace(/\.(?= )/, '').replace('-', '−'));

/** Decades, with 2× and 5× between them when the span is two decades or less. */
function logTicks(from: number, to: number): number[] {
  const d = decades(from, to);
  if (d.length > 3) return d;
  return d.flatMap((v) => [v, 2 * v, 5 * v]).filter((v) => v >= from * (1 - 1e-9) && v <= to * (1 + 1e-9));
}

/** Powers of ten from `from` to `to` (both powers of ten, or rounded out to them). */
export function decades(from: number, to: number): number[] {
  const out: number[] = [];
  for (let k = Math.floor(Math.log10(from) + 1e-9); k <= Math.ceil(Math.log10(to) - 1e-9); k++) out.push(10 ** k);
  return out;
}

/** Evenly spaced round ticks (1, 2 or 5 times a power of ten) covering [lo, hi], about `count` of them. */
export function niceTicks(lo: number, hi: number, count: number): number[] {
  const span = hi - lo || Math.abs(hi) || 1;
  const raw = span / count;
  const p = 10 ** Math.floor(Math.log10(raw));
  const step = [1, 2, 5, 10].map((m) => m * p).find((s) => s >= raw) ?? 10 * p;
  const out: number[] = [];
  for (let v = Math.ceil(lo / step) * step; v <= hi + 1e-9 * step; v += step) out.push(+v.toPrecision(12));
  return out;
}

/** Multiples of 45° (of 90° beyond 360° of span) from lo to hi. */
function angleTicks(lo: number, hi: number): number[] {
  const step = hi - lo > 360 ? 90 : 45;
  const out: number[] = [];
  for (let d = Math.ceil(lo / step) * step; d <= hi; d += step) out.push(d);
  return out;
}

/** Rounds every number inside attribute values to 2 decimals: stable bytes, smaller files. */
export function roundSvg(svg: string): string {
  return svg.replace(/="([^"]*)"/g, (_, v: string) => `="${v.replace(/-?\d+\.\d{3,}(?:e-?\d+)?/g, (n) => String(+(+n).toFixed(2)))}"`);
}

/**
 * Plot numbers the ids of its markers and clip paths with a counter global to
 * the process: renumbered here per plot and prefixed with the plot's id, so a
 * page reads the same however many were drawn before it.
 */
export function localIds(svg: string, id: string): string {
  const seen = new Map<string, string>();
  return svg.replace(/plot-([a-z]+)-(\d+)/g, (m, kind: string) => {
    let local = seen.get(m);
    if (!local) seen.set(m, (local = `${id}-${kind}-${seen.size + 1}`));
    return local;
  });
}

/** An SVG with its text alternative: <title> and <desc> first, named by aria-labelledby. */
function accessible(svg: string, id: string, title: string, desc: string): string {
  const esc = (s: string) => s.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&quot;');
  return localIds(svg, id)
    .replace(/^<svg /, `<svg id="${id}" role="img" aria-labelledby="${id}-title ${id}-desc" `)
    .replace(/ aria-label="[^"]*"(?= [^>]*>)/, '')
    .replace(/^(<svg[^>]*>)/, `$1<title id="${id}-title">${esc(title)}</title><desc id="${id}-desc">${esc(desc)}</desc>`);
}

export class Plotter {
  constructor(private readonly libs: typeof Libs) {}

  private draw(id: string, title: string, desc: string, options: Record<string, unknown>): string {
    const { document } = this.libs.parseHTML('<!doctype html><html><body></body></html>');
    const svg = this.libs.Plot.plot({ document, width: WIDTH, height: HEIGHT, marginLeft: 64, marginRight: 24, marginBottom: 40, style: { fontSize: '11px' }, ...options } as Parameters<PlotLib['plot']>[0]) as unknown as { outerHTML: string };
    return accessible(roundSvg(svg.outerHTML), id, title, desc);
  }

  /** Magnitude and phase over frequency: A, β·A, the closed loop, the worst corner; crossover, margins and claims marked. */
  bode(b: BodeData, block: string): { magnitude: string; phase: string } {
    const P = this.libs.Plot;
    const from = b.open[0].f;
    const to = b.open[b.open.length - 1].f;
    const x = { type: 'log', domain: [from, to], ticks: decades(from, to), tickFormat: si('frequency'), label: 'Frequency (Hz) →', grid: true };
    const curves: Array<{ cls: string; pts: Array<{ f: number; db: number; deg: number }> }> = [{ cls: 'c-open', pts: b.open }];
    if (b.loop) curves.push({ cls: 'c-loop', pts: b.loop });
    if (b.closed) curves.push({ cls: 'c-closed', pts: b.closed });
    if (b.corner) {
      curves.push({ cls: 'c-corner-open', pts: b.corner.open });
      if (b.corner.loop) curves.push({ cls: 'c-corner-loop', pts: b.corner.loop });
    }
    const dbs = curves.flatMap((c) => c.pts.map((p) => p.db));
    const dbLo = Math.max(Math.min(...dbs), Math.max(...dbs) - 200, -120);
    const dbHi = Math.max(...dbs);
    const clipDb = (p: { db: number }) => p.db >= dbLo - 1;
    const magMarks: unknown[] = [P.ruleY([0], { className: 'm-zero' })];
    for (const c of curves) magMarks.push(P.line(c.pts.filter(clipDb), { x: 'f', y: 'db', className: c.cls, strokeWidth: 1.75 }));
    const fcDesc: string[] = [];
    if (b.unity !== undefined) magMarks.push(P.dot([{ f: b.unity, db: 0 }], { x: 'f', y: 'db', r: 4, className: 'mk-unity', title: () => `A's unity-gain frequency ${si('frequency')(b.unity!)}` }));
    // Claim labels stacked from the top, one line each, so that close claims stay legible.
    for (const [i, g] of [...b.claimedGbw, ...b.claimedBw].entries()) {
      const bw = i >= b.claimedGbw.length;
      magMarks.push(P.ruleX([g.f], { className: 'mk-claim', strokeDasharray: bw ? '2,3' : '4,3' }));
      magMarks.push(P.text([{ f: g.f, db: dbHi }], { x: 'f', y: 'db', text: () => g.label, textAnchor: 'end', dx: -4, dy: 6 + 13 * i, className: 'mk-claim-text' }));
      fcDesc.push(`${g.label} is drawn as a dashed vertical line`);
    }
    if (b.crossover) {
      magMarks.push(P.dot([{ f: b.crossover.f, db: 0 }], { x: 'f', y: 'db', r: 4.5, className: 'mk-crossover', title: () => `loop crossover ${formatQuantity(b.crossover!.f, 'frequency')}` }));
      magMarks.push(P.text([{ f: b.crossover.f, db: 0 }], { x: 'f', y: 'db', text: () => `f_c ${formatQuantity(b.crossover!.f, 'frequency')}`, textAnchor: 'start', dx: 6, dy: -8, className: 'mk-text' }));
    }
    if (b.gainMargin) {
      const gm = b.gainMargin;
      magMarks.push(P.link([{ f: gm.f, a: -gm.db, b: 0 }], { x1: 'f', x2: 'f', y1: 'a', y2: 'b', className: 'mk-margin', strokeWidth: 2.5 }));
      magMarks.push(P.text([{ f: gm.f, db: -gm.db / 2 }], { x: 'f', y: 'db', text: () => `GM ${formatQuantity(gm.db, 'gain')}`, textAnchor: 'start', dx: 6, className: 'mk-text' }));
      for (const c of b.claimedGm) {
        const f2 = gm.f * 1.25;
        magMarks.push(P.link([{ f: f2, a: -c.db, b: 0 }], { x1: 'f', x2: 'f', y1: 'a', y2: 'b', className: 'mk-claim', strokeDasharray: '4,3', markerStart: 'tick-y', markerEnd: 'tick-y' }));
      }
    }
    const magDesc = [
      `Magnitude in dB of A(jω)${b.loop ? `, the loop gain β·A (β = ${+b.beta!.toPrecision(3)})` : ''}${b.closed ? ', the closed-loop response' : ''}${b.corner ? `, and at the worst corner ${b.corner.label}` : ''}, from ${si('frequency')(from)} to ${si('frequency')(to)} on a log axis.`,
      b.crossover ? `The loop crosses 0 dB at ${formatQuantity(b.crossover.f, 'frequency')}.` : b.unity !== undefined ? `A crosses 0 dB at ${formatQuantity(b.unity, 'frequency')}.` : '',
      b.gainMargin ? `Gain margin ${formatQuantity(b.gainMargin.db, 'gain')} at ${formatQuantity(b.gainMargin.f, 'frequency')}.` : '',
      ...fcDesc,
    ].filter(Boolean).join(' ');
    const magnitude = this.draw(`bode-mag`, `Bode magnitude of ${block}`, magDesc, {
      x,
      y: { domain: [dbLo, dbHi + 5], ticks: niceTicks(dbLo, dbHi + 5, 8), label: '↑ Magnitude (dB)', grid: true },
      marks: magMarks as Markish,
    });

    const phaseCurves = curves.filter((c) => c.cls !== 'c-loop' && c.cls !== 'c-corner-loop');
    const degs = phaseCurves.flatMap((c) => c.pts.filter(clipDb).map((p) => p.deg));
    const degLo = Math.floor(Math.min(...degs, b.crossover ? b.crossover.deg - b.crossover.pm : 0) / 45) * 45;
    const degHi = Math.ceil(Math.max(...degs, 0) / 45) * 45;
    const phMarks: unknown[] = [];
    for (const c of phaseCurves) phMarks.push(P.line(c.pts.filter(clipDb), { x: 'f', y: 'deg', className: c.cls, strokeWidth: 1.75 }));
    let pmDesc = '';
    if (b.crossover) {
      const { f, deg, pm } = b.crossover;
      const ref = deg - pm;
      phMarks.push(P.ruleY([ref], { className: 'm-zero', strokeDasharray: '2,2' }));
      phMarks.push(P.link([{ f, a: ref, b: deg }], { x1: 'f', x2: 'f', y1: 'a', y2: 'b', className: 'mk-margin', strokeWidth: 2.5 }));
      phMarks.push(P.dot([{ f, deg }], { x: 'f', y: 'deg', r: 4.5, className: 'mk-crossover' }));
      phMarks.push(P.text([{ f, deg: ref + pm / 2 }], { x: 'f', y: 'deg', text: () => `PM ${formatQuantity(pm, 'angle')}`, textAnchor: 'end', dx: -8, className: 'mk-text' }));
      pmDesc = `At the crossover ${formatQuantity(f, 'frequency')} the phase is ${formatQuantity(deg, 'angle')}: a phase margin of ${formatQuantity(pm, 'angle')} above ${formatQuantity(ref, 'angle')}.`;
      for (const [i, c] of b.claimedPm.entries()) {
        const f2 = f * 1.3 ** (i + 1);
        phMarks.push(P.link([{ f: f2, a: ref, b: ref + c.deg }], { x1: 'f', x2: 'f', y1: 'a', y2: 'b', className: 'mk-claim', strokeWidth: 1.5, markerStart: 'tick-x', markerEnd: 'tick-x' }));
        phMarks.push(P.text([{ f: f2, deg: ref + c.deg }], { x: 'f', y: 'deg', text: () => c.label, textAnchor: 'start', dx: 6 + 4 * i, dy: -6 - 13 * i, className: 'mk-claim-text' }));
        pmDesc += ` The ${c.label} is drawn as a bracket beside it.`;
      }
    }
    const phase = this.draw(`bode-phase`, `Bode phase of ${block}`, `Phase in degrees of A(jω) (the loop gain has the same phase)${b.closed ? ' and of the closed loop' : ''}, on the same frequency axis. ${pmDesc}`.trim(), {
      x,
      y: { domain: [degLo, degHi], ticks: angleTicks(degLo, degHi), tickFormat: (d: number) => `${d}°`.replace('-', '−'), label: '↑ Phase (°)', grid: true },
      marks: phMarks as Markish,
    });
    return { magnitude, phase };
  }

  /** Poles and zeros on symmetric-log axes (s/2π in Hz), readable when the roots are decades apart. */
  poleZero(page: BlockPage): string | undefined {
    const P = this.libs.Plot;
    const all = [...page.poles, ...page.zeros, ...page.closedPoles];
    if (!all.length) return undefined;
    const sizes = all.map((r) => r.hz).filter((h) => h > 0);
    const lo = 10 ** Math.floor(Math.log10(Math.min(...sizes)));
    const hi = 10 ** Math.ceil(Math.log10(Math.max(...sizes)));
    const constant = lo / 10;
    // Every k-th decade, so that at most four labels sit on each side of the origin.
    const every = decades(lo, hi);
    const k = Math.ceil(every.length / 4);
    const side = every.filter((_, i) => i % k === 0);
    const sparse = [...[...side].reverse().map((v) => -v), 0, ...side];
    const axis = (label: string) => ({ type: 'symlog', constant, domain: [-hi, hi], ticks: sparse, tickFormat: si('frequency'), label, grid: true });
    const marks: unknown[] = [P.ruleX([0], { className: 'm-zero' }), P.ruleY([0], { className: 'm-zero' })];
    const put = (rows: RootRow[], cls: string, symbol: string, name: string) =>
      marks.push(P.dot(rows, { x: 're', y: 'im', symbol: () => symbol, r: 6, className: cls, strokeWidth: 2, title: (r: RootRow) => `${name} at ${formatQuantity(r.re, 'frequency')} ${r.im >= 0 ? '+' : '−'} j${formatQuantity(Math.abs(r.im), 'frequency')}` }));
    put(page.poles, 'pz-pole', 'times', 'pole of A(s)');
    put(page.zeros, 'pz-zero', 'circle', 'zero of A(s)');
    put(page.closedPoles, 'pz-closed', 'square', 'closed-loop pole');
    const desc = `Poles (×) and zeros (○) of A(s)${page.closedPoles.length ? ' and closed-loop poles (□)' : ''} in the s-plane divided by 2π, in Hz, on symmetric-log axes (linear within ±${formatQuantity(constant, 'frequency')}); the left half-plane is stable. The table beside lists every root.`;
    return this.draw('pz-map', `Pole-zero map of ${page.block}`, desc, {
      height: 380,
      width: 600,
      x: axis('Real part σ/2π (Hz) →'),
      y: axis('↑ Imaginary part ω/2π (Hz)'),
      marks: marks as Markish,
    });
  }

  /** The small-signal step response with the settling band, overshoot and settling time marked. */
  step(s: StepData, block: string): string {
    const P = this.libs.Plot;
    const end = s.points[s.points.length - 1].t;
    const ys = s.points.map((p) => p.y);
    const yHi = Math.max(1 + s.band, ...ys) + 0.05;
    const yLo = Math.min(0, ...ys);
    const marks: unknown[] = [
      P.ruleY([1 - s.band, 1 + s.band], { className: 'mk-band', strokeDasharray: '3,3' }),
      P.ruleY([0, 1], { className: 'm-zero' }),
      P.line(s.points, { x: 't', y: 'y', className: 'c-step', strokeWidth: 1.75 }),
    ];
    // A label to the right of its line, or to the left when the line is in the right half.
    const beside = (t: number) => (t > 0.55 * end ? { textAnchor: 'end' as const, dx: -4 } : { textAnchor: 'start' as const, dx: 4 });
    const desc: string[] = [`The closed loop's small-signal step response y(t)/y(∞) over ${formatQuantity(end, 'time')}, with the settling band ±${+(100 * s.band).toPrecision(3)} % dashed.`];
    if (s.overshoot) {
      const o = s.overshoot;
      marks.push(P.dot([o], { x: 't', y: () => 1 + o.value, r: 4, className: 'mk-crossover' }));
      marks.push(P.text([o], { x: 't', y: () => 1 + o.value, text: () => `overshoot ${+(100 * o.value).toPrecision(3)} %`, textAnchor: 'start', dx: 6, dy: -8, className: 'mk-text' }));
      desc.push(`Overshoot ${+(100 * o.value).toPrecision(3)} % at ${formatQuantity(o.t, 'time')}.`);
    }
    if (s.settling !== undefined && s.settling <= end) {
      marks.push(P.ruleX([s.settling], { className: 'mk-margin' }));
      marks.push(P.text([{ t: s.settling }], { x: 't', y: () => yLo + 0.1 * (yHi - yLo), text: () => `settled ${formatQuantity(s.settling!, 'time', 3)}`, ...beside(s.settling), className: 'mk-text' }));
      desc.push(`It stays within the band from ${formatQuantity(s.settling, 'time')}.`);
    }
    if (s.largeSettling && s.largeSettling.t <= end) {
      marks.push(P.ruleX([s.largeSettling.t], { className: 'mk-claim', strokeDasharray: '5,3' }));
      marks.push(P.text([{ t: s.largeSettling.t }], { x: 't', y: () => yLo + 0.22 * (yHi - yLo), text: () => `large step, with slewing: ${formatQuantity(s.largeSettling!.t, 'time', 3)}`, ...beside(s.largeSettling.t), className: 'mk-claim-text' }));
      desc.push(`A large step, slewing first, settles at ${formatQuantity(s.largeSettling.t, 'time')} (dashed).`);
    }
    return this.draw('step', `Step response of ${block}`, desc.join(' '), {
      x: { domain: [0, end], ticks: niceTicks(0, end, 8), tickFormat: si('time'), label: 'Time after the step (s) →', grid: true },
      y: { domain: [yLo, yHi], ticks: niceTicks(yLo, yHi, 6), tickFormat: (v: number) => `${+(100 * v).toPrecision(3)} %`, label: '↑ Output, % of final value', grid: true },
      marks: marks as Markish,
    });
  }

  /** The settling error |y(t)/y(∞) − 1| on a log axis: the band and the last exit from it, readable at any band. */
  settling(s: StepData, block: string): string {
    const P = this.libs.Plot;
    const end = s.points[s.points.length - 1].t;
    const floor = s.band / 100;
    const pts = s.points.map((p) => ({ t: p.t, e: Math.max(Math.abs(p.y - 1), floor) }));
    const hi = 10 ** Math.ceil(Math.log10(Math.max(...pts.map((p) => p.e))) - 1e-9);
    const lo = 10 ** Math.floor(Math.log10(floor));
    const marks: unknown[] = [P.ruleY([s.band], { className: 'mk-band', strokeDasharray: '3,3' }), P.line(pts, { x: 't', y: 'e', className: 'c-step', strokeWidth: 1.5 })];
    marks.push(P.text([{ t: end, e: s.band }], { x: 't', y: 'e', text: () => `band ±${+(100 * s.band).toPrecision(3)} %`, textAnchor: 'end', dy: -7, className: 'mk-text' }));
    if (s.settling !== undefined && s.settling <= end) marks.push(P.ruleX([s.settling], { className: 'mk-margin' }));
    const pct = (v: number) => `${+(100 * v).toPrecision(3)} %`;
    return this.draw('settling', `Settling error of ${block}`, `The distance from the final value, |y(t)/y(∞) − 1|, on a log axis from ${pct(lo)} to ${pct(hi)}, with the settling band ±${pct(s.band)}${s.settling !== undefined ? ` and the settling time ${formatQuantity(s.settling, 'time')}` : ''}; the dips are the zero crossings of the ringing.`, {
      height: 200,
      x: { domain: [0, end], ticks: niceTicks(0, end, 8), tickFormat: si('time'), label: 'Time after the step (s) →', grid: true },
      y: { type: 'log', domain: [lo, hi], ticks: decades(lo, hi), tickFormat: pct, label: '↑ |error|, % of final value', grid: true },
      marks: marks as Markish,
    });
  }

  /** Input-referred noise density over frequency, log-log, with the stated densities marked. */
  noise(n: NonNullable<BlockPage['noise']>, block: string): string {
    const P = this.libs.Plot;
    const from = n.points[0].f;
    const to = n.points[n.points.length - 1].f;
    const vals = [...n.points.map((p) => p.density), ...n.claimed.map((c) => c.value)];
    const lo = 10 ** Math.floor(Math.log10(Math.min(...vals)));
    const hi = 10 ** Math.ceil(Math.log10(Math.max(...vals)) + 1e-9);
    const marks: unknown[] = [P.line(n.points, { x: 'f', y: 'density', className: 'c-noise', strokeWidth: 1.75 })];
    for (const c of n.claimed) {
      marks.push(P.dot([c], { x: 'f', y: 'value', r: 5, symbol: 'diamond', className: 'mk-claim-dot' }));
      marks.push(P.text([c], { x: 'f', y: 'value', text: () => c.label, textAnchor: 'start', dx: 8, dy: -8, className: 'mk-claim-text' }));
    }
    return this.draw('noise', `Input-referred noise density of ${block}`, `Input-referred voltage noise density in V/√Hz over frequency, log-log, from every noise source of the model${n.claimed.length ? `; stated: ${n.claimed.map((c) => c.label).join(', ')} (diamonds)` : ''}.`, {
      x: { type: 'log', domain: [from, to], ticks: decades(from, to), tickFormat: si('frequency'), label: 'Frequency (Hz) →', grid: true },
      y: { type: 'log', domain: [lo, hi], ticks: logTicks(lo, hi), tickFormat: si('noise'), label: '↑ Density (V/√Hz)', grid: true },
      marks: marks as Markish,
    });
  }
}
