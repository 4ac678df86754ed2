// Fixes for a failing claim, as data (SPEC-FORMAT §4), every number computed
// by the model:
// (a) `restate`: the claim rewritten to what the design gives, in the author's
//     unit and precision, with the exact text edit, or the reason it is
//     withheld (a prefix slip under it, a table row it would contradict);
// (b) `design`: param changes that make the claim hold, each solved over the
//     knob's whole plausible range, evaluated at the value as printed, and
//     re-judged against every claim of the spec (every table row at its own
//     conditions, bounds at their worst case) and the closed loop's stability;
// (c) `none`: no value of any knob meets the claim, said with the range scanned.
// The words of `suggestions` are rendered from these.

import type { Fix, TextEdit } from '../verdicts/findings';
import { type Model, evaluationCount } from '../model/model';
import type { Judged } from '../verdicts/points';
import { type Kind, type Written, formatLike, formatQuantity, parseQuantity } from '../quantity';
import type { Recheck, RuleContext } from '../verdicts/rule';
import { slippedParams } from './slips';
import { keySpecOf, knobKeys } from '../spec/design';
import type { ClaimEntry, QuantityAt, Spec } from '../spec/types';
import type { KeySpec, Values } from '../topologies/types';
import { type BoundVerdict, THIN_FRACTION, judge, toleranceFor } from '../verdicts/verdict';

/** Formats a bound so that, read back, it is still on the safe side of `value`. */
export function formatBound(value: number, like: Written, kind: Kind, side: 'at-most' | 'at-least' | 'nearest'): string {
  let text = formatLike(value, like, kind);
  if (side === 'nearest') return text;
  let v = value;
  for (let i = 0; i < 4; i++) {
    const back = parseQuantity(text, kind);
    if (!back.ok) return text;
    const got = back.quantity.value;
    if (side === 'at-most' ? got <= value : got >= value) return text;
    v += (side === 'at-most' ? -2 : 2) * Math.abs(got - v);
    text = formatLike(v, like, kind);
  }
  return text;
}

const LEADING_NUMBER = /^[+\-\u2212]?(?:\d+\.?\d*|\.\d+)(?:[eE][+\-\u2212]?\d+)?/;
const CELL = { typ: 'Typ', min: 'Min', max: 'Max' } as const;

const claimText = (entry: ClaimEntry, bound: 'typ' | 'min' | 'max', value: string): string =>
  bound === 'typ' && entry.plain ? `\`${entry.key}: ${value}\`` : `\`${entry.key}: {${bound}: ${value}}\``;

/** The edit that replaces a statement's value, or null when its source cannot be edited as a plain span. */
function editFor(spec: Spec, q: QuantityAt, text: string): TextEdit | null {
  if (!q.span || !spec.lines) return null;
  const replacement = q.span.numberOnly ? (text.match(LEADING_NUMBER)?.[0] ?? text) : text;
  const start = spec.lines.pos(q.span.start);
  const end = spec.lines.pos(q.span.end);
  return { line: start.line, column: start.column, endLine: end.line, endColumn: end.column, start: q.span.start, end: q.span.end, text: replacement };
}

/** (a): restate the statement as the model gives it, or say why it is not restated. */
export function restate(ctx: RuleContext, entry: ClaimEntry, v: BoundVerdict, computed: number, where: string): Fix {
  const q = entry[v.bound]!;
  const side = v.bound === 'min' ? 'at-most' : v.bound === 'max' ? 'at-least' : 'nearest';
  const value = formatBound(computed, q.quantity.written, entry.spec.kind, side);
  const text = entry.source === 'table'
    ? v.bound === 'typ'
      ? `if the design is right, the ${CELL[v.bound]} cell of \`${entry.label}\` should read \`${value}\` (model value at ${where})`
      : `if the design stands, the ${CELL[v.bound]} cell of \`${entry.label}\` the model supports is \`${value}\` (at ${where})`
    : v.bound === 'typ'
      ? `if the design is right, the claim should read ${claimText(entry, 'typ', value)} (model value at ${where})`
      : `if the design stands, the bound the model supports is ${claimText(entry, v.bound, value)} (at ${where})`;
  // Never restate what rests on a value that is probably mistyped.
  const slips = slippedParams(ctx.spec);
  if (slips.length) return { kind: 'restate', text, bound: v.bound, edit: null, refused: `not restated: ${slips.join(', ')} looks like a prefix slip, and the figure rests on it; correct the param first` };
  // Nor write a row whose cells would then contradict each other.
  const back = parseQuantity(value, entry.spec.kind);
  const newValue = back.ok ? back.quantity.value : computed;
  const cells = { typ: entry.typ?.quantity.value, min: entry.min?.quantity.value, max: entry.max?.quantity.value, [v.bound]: newValue };
  if ((cells.min !== undefined && cells.typ !== undefined && cells.min > cells.typ) || (cells.typ !== undefined && cells.max !== undefined && cells.typ > cells.max) || (cells.min !== undefined && cells.max !== undefined && cells.min > cells.max)) {
    return { kind: 'restate', text, bound: v.bound, edit: null, refused: `not restated: ${value} would contradict the other statements of \`${entry.label ?? entry.key}\` (min ≤ typ ≤ max)` };
  }
  const edit = editFor(ctx.spec, q, value);
  return edit ? { kind: 'restate', text, bound: v.bound, edit } : { kind: 'restate', text, bound: v.bound, edit: null, refused: `not restated: ${q.unedited ?? 'the value is written in a form that cannot be edited in place'}` };
}

interface Statement {
  entry: ClaimEntry;
  bound: 'typ' | 'min' | 'max';
}

/** Does the statement hold (thin counts as holding) for this model? */
function holds(ctx: RuleContext, s: Statement, model: Model | null, strict: boolean): boolean {
  if (!model) return false;
  const fig = model.exact[s.entry.key];
  const only = { ...s.entry, typ: s.bound === 'typ' ? s.entry.typ : undefined, min: s.bound === 'min' ? s.entry.min : undefined, max: s.bound === 'max' ? s.entry.max : undefined };
  const v = judge(only, fig?.value ?? null, fig, toleranceFor(s.entry.spec.kind, ctx.tolerances))[0];
  // A bound is aimed clear of the thin-margin band, so the change is not itself flagged.
  return strict && s.bound !== 'typ' ? v.outcome === 'holds' : v.outcome !== 'fails';
}

/** The value as it will be printed, read back: what the suggestion's reader would type in. */
function printed(value: number, kind: Kind, digits = 3): { text: string; value: number } {
  const text = formatQuantity(value, kind, digits);
  const back = parseQuantity(text, kind);
  return { text, value: back.ok ? back.quantity.value : value };
}

/** A change's value in the fewest digits (three or more) that read back as exactly that value. */
function asPrinted(value: number, kind: Kind): string {
  for (let digits = 3; digits <= 9; digits++) {
    const p = printed(value, kind, digits);
    if (p.value === value) return p.text;
  }
  return formatQuantity(value, kind, 9);
}

/** The range a knob is searched over: its plausible range, within three decades of its value. */
function knobRange(spec: KeySpec, now: number): [number, number] {
  const [plo, phi] = spec.plausible ?? [now / 100, now * 100];
  return [Math.max(plo, now / 1e3), Math.min(phi, now * 1e3)];
}

const PER_DECADE = 6;

/**
 * Points a decade for the scan: six, fewer for a network of many nodes, whose
 * evaluations cost a thousand times more (the 'none' statement says what was
 * scanned, so it stays true).
 */
const perDecade = (ctx: RuleContext): number => (ctx.model.analysis.stamped.n > 12 ? 2 : ctx.model.analysis.stamped.n > 6 ? 4 : PER_DECADE);

/**
 * The value of one knob nearest its present value at which the statement
 * holds at `at` (the typical point, or the worst point of a bound), on a log
 * grid over the knob's whole plausible range (the figure may saturate, vanish
 * or turn back), refined to the boundary and checked at the value as printed.
 */
function solveKnob(ctx: RuleContext, s: Statement, key: KeySpec, at: Values): { value: number; model: Model } | { closest: number; knifeEdge?: number } | null {
  const nowRaw = at[key.key] ?? 0;
  const now = nowRaw > 0 ? nowRaw : key.scale?.(at) ?? 0;
  if (!(now > 0)) return null;
  const [lo, hi] = knobRange(key, now);
  if (!(hi > lo)) return null;
  const model = (x: number) => ctx.withChanges({ ...at, [key.key]: x });
  const ok = (x: number, strict = true) => holds(ctx, s, model(x), strict);
  const n = Math.max(2, Math.ceil(Math.log10(hi / lo) * perDecade(ctx)));
  const xs: number[] = [];
  for (let i = 0; i <= n; i++) xs.push(lo * (hi / lo) ** (i / n));
  const good = xs.map((x) => ok(x));
  // Nearest holding grid point to the present value.
  let best = -1;
  for (let i = 0; i <= n; i++) if (good[i] && (best < 0 || Math.abs(Math.log(xs[i] / now)) < Math.abs(Math.log(xs[best] / now)))) best = i;
  if (best < 0) {
    // Nothing on the grid holds: search between the neighbours of the nearest
    // approach (golden section on the distance from holding, in tolerances),
    // so that a window narrower than the grid is not missed there.
    const miss = (x: number): number => {
      const m = model(x);
      const fig = m?.exact[s.entry.key];
      const only = { ...s.entry, typ: s.bound === 'typ' ? s.entry.typ : undefined, min: s.bound === 'min' ? s.entry.min : undefined, max: s.bound === 'max' ? s.entry.max : undefined };
      const t = toleranceFor(s.entry.spec.kind, ctx.tolerances);
      const v = judge(only, fig?.value ?? null, fig, t)[0];
      if (!Number.isFinite(v.delta)) return Infinity;
      const d = t.relative ? v.delta / (Math.abs(v.claimed) * t.value) : v.delta / t.value;
      return s.bound === 'typ' ? Math.abs(d) - 1 : s.bound === 'min' ? -d : d;
    };
    const misses = xs.map(miss);
    let k = 0;
    for (let i = 1; i <= n; i++) if (misses[i] < misses[k]) k = i;
    if (!Number.isFinite(misses[k])) return { closest: xs[k] };
    let a = Math.log(xs[Math.max(0, k - 1)]);
    let b = Math.log(xs[Math.min(n, k + 1)]);
    const phi = (Math.sqrt(5) - 1) / 2;
    let c = b - phi * (b - a);
    let d = a + phi * (b - a);
    let mc = miss(Math.exp(c));
    let md = miss(Math.exp(d));
    for (let i = 0; i < 40 && mc > 0 && md > 0; i++) {
      if (mc < md) {
        b = d;
        d = c;
        md = mc;
        c = b - phi * (b - a);
        mc = miss(Math.exp(c));
      } else {
        a = c;
        c = d;
        mc = md;
        d = a + phi * (b - a);
        md = miss(Math.exp(d));
      }
    }
    const x = mc <= md ? Math.exp(c) : Math.exp(d);
    if (Math.min(mc, md) > 0) {
      // The nearest approach is named only where the figure exists as printed.
      const p = printed(x, key.kind);
      return Number.isFinite(miss(p.value)) ? { closest: p.value } : { closest: NaN };
    }
    // A window narrower than the grid (a figure that diverges, say). Written to
    // three digits it still holds: a design change. Only with more digits: a
    // knife edge, said as such, never offered as a change to make.
    const p3 = printed(x, key.kind);
    const m3 = model(p3.value);
    if (m3 && holds(ctx, s, m3, false)) return { value: p3.value, model: m3 };
    for (let digits = 4; digits <= 9; digits++) {
      const p = printed(x, key.kind, digits);
      if (holds(ctx, s, model(p.value), false)) return { closest: NaN, knifeEdge: p.value };
    }
    return { closest: NaN };
  }
  // Move from the holding point towards the present value as far as it keeps holding.
  let inside = xs[best];
  const towards = now < inside ? best - 1 : best + 1;
  if (towards >= 0 && towards <= n && !good[towards] && !(xs[best] === now)) {
    let outside = xs[towards];
    for (let i = 0; i < 24 && Math.abs(Math.log(outside / inside)) > 2e-4; i++) {
      const mid = Math.sqrt(inside * outside);
      if (ok(mid)) inside = mid;
      else outside = mid;
    }
  }
  // A typical claim is aimed at its stated value, not at the edge of its tolerance.
  if (s.bound === 'typ') {
    const stated = s.entry.typ!.quantity.value;
    const d = (x: number): number | null => {
      const v = model(x)?.exact[s.entry.key]?.value;
      return v === null || v === undefined ? null : v - stated;
    };
    let lo = best;
    let hi = best;
    while (lo > 0 && good[lo - 1]) lo--;
    while (hi < n && good[hi + 1]) hi++;
    // The holding run and its neighbours: the stated value may lie just past a grid point that holds.
    const run = [inside, ...xs.slice(Math.max(0, lo - 1), Math.min(n, hi + 1) + 1)].sort((a, b) => Math.abs(Math.log(a / now)) - Math.abs(Math.log(b / now)));
    const dInside = d(run[0]);
    for (const x of run.slice(1)) {
      const dx = d(x);
      if (dInside === null || dx === null || dInside * dx > 0) continue;
      let a = run[0];
      let b = x;
      let da = dInside;
      for (let i = 0; i < 30 && Math.abs(Math.log(b / a)) > 1e-5; i++) {
        const mid = Math.sqrt(a * b);
        const dm = d(mid);
        if (dm === null) break;
        if (dm * da > 0) {
          a = mid;
          da = dm;
        } else b = mid;
      }
      inside = Math.sqrt(a * b);
      break;
    }
    const p = printed(inside, key.kind);
    const m = model(p.value);
    if (m && holds(ctx, s, m, false)) return { value: p.value, model: m };
  }
  // Printed to three digits: try the printed neighbours on the holding side.
  for (const candidate of [inside, inside * (inside > now ? 1.001 : 0.999), inside * (inside > now ? 1.005 : 0.995), inside * (inside > now ? 1.02 : 0.98)]) {
    const p = printed(candidate, key.kind);
    const m = model(p.value);
    if (m && holds(ctx, s, m, true)) return { value: p.value, model: m };
  }
  const p = printed(inside, key.kind);
  const m = model(p.value);
  if (m && holds(ctx, s, m, false)) return { value: p.value, model: m };
  for (let digits = 4; digits <= 9; digits++) {
    const q = printed(inside, key.kind, digits);
    if (holds(ctx, s, model(q.value), false)) return { closest: NaN, knifeEdge: q.value };
  }
  return null;
}

/** The written form of a statement's value, in its own unit: "21 MHz", "≥ 60 deg". */
const statedText = (j: Judged): string => {
  const q = j.entry[j.verdict.bound]!;
  return `${j.verdict.bound === 'min' ? '≥ ' : j.verdict.bound === 'max' ? '≤ ' : ''}${q.quantity.written.text}`;
};

/** A figure in the unit the claim was written in. */
const inOwnUnit = (j: Judged, value: number): string => formatLike(value, j.entry[j.verdict.bound]!.quantity.written, j.entry.spec.kind);

/** The same statement written again (a repeated table row): same claim, bound, stated value and conditions. */
const sameStatement = (a: ClaimEntry, b: ClaimEntry, bound: string): boolean =>
  a.key === b.key && a[bound as 'typ']?.quantity.value === b[bound as 'typ']?.quantity.value && (a.conditions?.text ?? '') === (b.conditions?.text ?? '');

/** A broken statement, and how many more statements fail the same way (repeated rows). */
interface Broken {
  j: Judged;
  more: number;
}

function breaksOf(r: Recheck, target: Statement): Broken[] {
  const groups = new Map<string, Broken & { lines: Set<string> }>();
  for (const j of r.judged) {
    if (j.verdict.outcome !== 'fails') continue;
    if (j.entry === target.entry || (j.entry.keyPos.line === target.entry.keyPos.line && j.entry.key === target.entry.key && j.verdict.bound === target.bound)) continue;
    // A repetition of the target itself is the target: its fate is the claim's own.
    if (j.verdict.bound === target.bound && sameStatement(j.entry, target.entry, target.bound)) continue;
    // Each broken statement once (a claim judged at several points is listed at
    // the first), and statements alike in all but their line as one.
    const id = `${j.entry.key}:${j.verdict.bound}:${j.entry[j.verdict.bound]?.quantity.value}:${j.entry.conditions?.text ?? ''}:${j.value}:${j.label}`;
    const line = `${j.entry.key}:${j.entry.keyPos.line}:${j.verdict.bound}`;
    const g = groups.get(id);
    if (!g) groups.set(id, { j, more: 0, lines: new Set([line]) });
    else if (!g.lines.has(line)) {
      g.lines.add(line);
      g.more++;
    }
  }
  return [...groups.values()].map(({ j, more }) => ({ j, more }));
}

function designFix(ctx: RuleContext, target: Statement, changes: Values, why: string | undefined, r: Recheck): Fix {
  const topo = ctx.spec.topology;
  const kindOf = (k: string) => keySpecOf(ctx.spec, k)?.kind ?? 'ratio';
  const now = ctx.model.values;
  const changeText = Object.entries(changes).map(([k, v]) => `${k} = ${asPrinted(v, kindOf(k))}`).join(' and ');
  const nowText = Object.keys(changes).map((k) => (now[k] === undefined || now[k] === 0 ? 'now none' : `now ${formatQuantity(now[k], kindOf(k))}`)).join(', ');
  const gives: Record<string, number | null> = {};
  for (const c of ctx.spec.claims) if (!(c.key in gives)) gives[c.key] = r.front?.exact[c.key]?.value ?? null;
  const self = r.judged.find((j) => j.entry === target.entry && j.verdict.bound === target.bound)
    ?? r.judged.find((j) => j.entry.key === target.entry.key && j.verdict.bound === target.bound && j.entry.keyPos.line === target.entry.keyPos.line);
  const broken = breaksOf(r, target);
  const selfHolds = self ? self.verdict.outcome !== 'fails' : false;
  const meetsAll = selfHolds && broken.length === 0 && r.stable;
  const selfFigure = self?.label === 'typical' ? r.front?.exact[target.entry.key] : undefined;
  const selfText = self && self.value !== null ? inOwnUnit(self, self.value) : selfFigure?.unbounded ? 'an unbounded margin (no gain increase reaches −1)' : 'no value';
  const effects: string[] = [];
  if (!selfHolds && self) effects.push(`the claim itself still fails over the ranges (${selfText} at ${self.label})`);
  // A claim that fails already, with the same figure, is not a side effect of the change: say "still".
  const before = ctx.recheck ? ctx.recheck({}).judged : [];
  const unchanged = (b: Judged): boolean =>
    before.some((x) => x.entry.key === b.entry.key && x.entry.keyPos.line === b.entry.keyPos.line && x.verdict.bound === b.verdict.bound && x.verdict.outcome === 'fails' && (x.value === b.value || (x.value !== null && b.value !== null && Math.abs(x.value - b.value) <= 1e-9 * Math.abs(x.value))));
  for (const { j: b, more } of broken) {
    const what = b.value === null ? 'has no value' : unchanged(b) ? `still fails at ${inOwnUnit(b, b.value)}` : `becomes ${inOwnUnit(b, b.value)}`;
    const rows = more ? ` and ${more} more row${more === 1 ? '' : 's'} alike` : '';
    effects.push(`${b.entry.key}${b.entry.source === 'table' ? ` (${b.entry.label}, line ${b.entry.keyPos.line}${rows})` : ''} ${what}${b.label !== 'typical' ? ` at ${b.label}` : ''} (claimed ${statedText(b)})`);
  }
  if (!r.stable) effects.push('the closed loop is not stable at every operating point');
  const effect = effects.length === 0 ? 'and the other claims still hold' : `but then ${effects.join('; ')}`;
  const text = `${changeText} (${nowText}${why ? `; ${why}` : ''}) gives ${selfText}, ${effect}`;
  return {
    kind: 'design',
    text,
    changes,
    gives,
    stable: r.stable,
    meetsAll,
    breaks: broken.map(({ j: b }) => ({ claim: b.entry.key, line: b.entry.keyPos.line, value: b.value })),
  };
}

/** Where a statement is judged now: the typical point, or the worst point of its bound. */
const worstValues = (r: Recheck | undefined, s: Statement, fallback: Values): Values =>
  r?.judged.find((j) => j.entry.key === s.entry.key && j.verdict.bound === s.bound && j.entry.keyPos.line === s.entry.keyPos.line)?.values ?? fallback;

/** (b) and (c): design changes that make the statement hold, each re-judged against the whole spec. */
const searched = new WeakMap<RuleContext, Map<string, Fix[]>>();

/** Says that a failing statement got no design-change search: the file's budget was spent. */
export const BUDGET_SPENT = 'design changes are searched for the first failing statements of a file only; correct those first, or restate this one';

/** Networks above this many nodes get no design-change search: it evaluates the model hundreds of times, each O(n³) per frequency. */
export const MAX_SEARCH_NODES = 10;
const TOO_LARGE = `design changes are not searched for a network of more than ${MAX_SEARCH_NODES} nodes (each search evaluates the model hundreds of times)`;

/**
 * (b) and (c), shared by repeated statements (a table row written again at
 * the same conditions gets the first one's changes) and within the file's
 * budget of searches; why not, when the budget is spent or the network too large.
 */
export function designChanges(ctx: RuleContext, entry: ClaimEntry, v: BoundVerdict, at: Values): Fix[] | { notSearched: string } {
  if (ctx.model.analysis.stamped.n > MAX_SEARCH_NODES && (ctx.spec.topology.knobs[entry.key] ?? []).length) return { notSearched: TOO_LARGE };
  let memo = searched.get(ctx);
  if (!memo) searched.set(ctx, (memo = new Map()));
  let key = `${entry.key}|${v.bound}|${entry.typ?.quantity.value}|${entry.min?.quantity.value}|${entry.max?.quantity.value}|`;
  for (const k in at) key += `${k}:${at[k]};`;
  const hit = memo.get(key);
  if (hit) return hit;
  if (ctx.designBudget) {
    if (ctx.designBudget.left <= 0 || evaluationCount() > ctx.designBudget.until) return { notSearched: BUDGET_SPENT };
    ctx.designBudget.left--;
  }
  const fixes = searchDesignChanges(ctx, entry, v, at);
  memo.set(key, fixes);
  return fixes;
}

function searchDesignChanges(ctx: RuleContext, entry: ClaimEntry, v: BoundVerdict, at: Values): Fix[] {
  const topo = ctx.spec.topology;
  const kind = entry.spec.kind;
  // A design that beats its typical claim is not to be made worse: only the claim is stale.
  const current = ctx.model.exact[entry.key]?.value;
  if (v.bound === 'typ' && current !== null && current !== undefined && entry.spec.better) {
    if (entry.spec.better === 'higher' ? current > v.claimed : current < v.claimed) return [];
  }
  if (!ctx.recheck) return [];
  const target: Statement = { entry, bound: v.bound };
  const fixes: Fix[] = [];
  const tried = new Set<string>();
  const add = (changes: Values, why?: string): Fix | null => {
    const key = JSON.stringify(changes);
    if (tried.has(key)) return null;
    tried.add(key);
    const f = designFix(ctx, target, changes, why, ctx.recheck!(changes));
    fixes.push(f);
    return f;
  };
  // Closed-form hints of the topology, printed and then checked like the rest.
  for (const hint of topo.hints(entry.key, ctx.model.values)) {
    // A hint that sets a value written as an expression is no change a designer can make as such.
    if (Object.keys(hint.changes).some((k) => ctx.spec.derived?.basis.has(k))) continue;
    const changes: Values = {};
    for (const [k, x] of Object.entries(hint.changes)) changes[k] = printed(x, topo.params.find((p) => p.key === k)?.kind ?? 'ratio').value;
    if (holds(ctx, target, ctx.withChanges({ ...at, ...changes }), false)) add(changes, hint.why);
  }
  // A knob written as an expression gives way to the design quantities it is computed from.
  const knobs = knobKeys(ctx.spec, topo.knobs[entry.key] ?? []).map((k) => keySpecOf(ctx.spec, k)).filter((k): k is KeySpec => k !== undefined);
  const unmet: Array<{ key: KeySpec; closest: number; knifeEdge?: number }> = [];
  for (const key of knobs) {
    // Solved where the statement is judged; for a bound over ranges, judged
    // again over the whole box, and solved again at the new worst point.
    let where = at;
    for (let round = 0; round < 3; round++) {
      const s = solveKnob(ctx, target, key, where);
      if (!s) break;
      if ('closest' in s) {
        unmet.push({ key, closest: s.closest, ...(s.knifeEdge !== undefined ? { knifeEdge: s.knifeEdge } : {}) });
        break;
      }
      const changes = { [key.key]: s.value };
      const r = ctx.recheck(changes);
      const self = r.judged.find((j) => j.entry.key === entry.key && j.verdict.bound === v.bound && j.entry.keyPos.line === entry.keyPos.line);
      if (!self || self.verdict.outcome !== 'fails' || round === 2) {
        add(changes);
        break;
      }
      where = { ...worstValues(r, target, at), [key.key]: s.value };
    }
  }
  // No single knob meets every claim: try them in pairs, nearest first.
  if (!fixes.some((f) => f.kind === 'design' && f.meetsAll) && knobs.length >= 2 && ctx.model.analysis.stamped.n <= 12) {
    const pair = solvePair(ctx, target, knobs.slice(0, 3), at);
    if (pair) add(pair);
  }
  if (!fixes.length && knobs.length) {
    const range: Record<string, [number, number]> = {};
    for (const k of knobs) {
      const now = at[k.key] > 0 ? at[k.key] : k.scale?.(at) ?? 0;
      if (now > 0) range[k.key] = knobRange(k, now);
    }
    const span = Object.entries(range).map(([k, [lo, hi]]) => `${k} from ${formatQuantity(lo, keySpecOf(ctx.spec, k)!.kind)} to ${formatQuantity(hi, keySpecOf(ctx.spec, k)!.kind)}`).join(', ');
    const named = unmet.filter((u) => Number.isFinite(u.closest));
    const closest = named.length ? `; the nearest approach is at ${named.map((u) => `${u.key.key} = ${formatQuantity(u.closest, u.key.kind)}`).join(', ')}` : '';
    const edges = unmet.filter((u) => u.knifeEdge !== undefined);
    const edge = edges.length ? `; it holds only in a window narrower than three digits, around ${edges.map((u) => `${u.key.key} = ${asPrinted(u.knifeEdge!, u.key.kind)}`).join(', ')} (a knife edge, not a design change)` : '';
    fixes.push({ kind: 'none', text: `no single value of ${knobs.map((k) => k.key).join(' or ')} written to three significant digits (scanned ${span}, ${perDecade(ctx)} points a decade, refined near the nearest approach) meets the claim on its own${closest}${edge}`, knobs: knobs.map((k) => k.key), range });
  } else if (fixes.length && !fixes.some((f) => f.kind === 'design' && f.meetsAll)) {
    const conflicts = [...new Set(fixes.flatMap((f) => (f.kind === 'design' ? f.breaks.map((b) => b.claim) : [])))];
    const names = [...new Set(fixes.flatMap((f) => (f.kind === 'design' ? Object.keys(f.changes) : [])))];
    fixes.push({ kind: 'none', text: `no change of ${names.join(', ')} tried (alone, or two together) meets every claim${conflicts.length ? `: ${entry.key} conflicts with ${conflicts.join(', ')}` : ''}`, knobs: names, range: {} });
  }
  void kind;
  void THIN_FRACTION;
  return fixes;
}

/**
 * Two knobs at once: a log grid of each over a factor of 10 either way, the
 * holding points nearest the present design judged against the whole spec,
 * the first that meets every claim returned.
 */
function solvePair(ctx: RuleContext, target: Statement, knobs: KeySpec[], at: Values): Values | null {
  const steps = [-1, -0.6, -0.3, -0.12, 0, 0.12, 0.3, 0.6, 1];
  const candidates: Array<{ changes: Values; distance: number }> = [];
  for (let i = 0; i < knobs.length; i++) {
    for (let j = i + 1; j < knobs.length; j++) {
      const a = knobs[i];
      const b = knobs[j];
      const na = at[a.key] > 0 ? at[a.key] : a.scale?.(at) ?? 0;
      const nb = at[b.key] > 0 ? at[b.key] : b.scale?.(at) ?? 0;
      if (!(na > 0 && nb > 0)) continue;
      for (const ea of steps) {
        for (const eb of steps) {
          if (ea === 0 || eb === 0) continue; // single-knob changes were tried already
          const changes = { [a.key]: printed(na * 10 ** ea, a.kind).value, [b.key]: printed(nb * 10 ** eb, b.kind).value };
          if (holds(ctx, target, ctx.withChanges({ ...at, ...changes }), true)) candidates.push({ changes, distance: Math.abs(ea) + Math.abs(eb) });
        }
      }
    }
  }
  candidates.sort((x, y) => x.distance - y.distance);
  for (const c of candidates.slice(0, 8)) {
    if (ctx.designBudget && evaluationCount() > ctx.designBudget.until) break;
    const r = ctx.recheck!(c.changes);
    if (r.stable && r.judged.every((j) => j.verdict.outcome !== 'fails')) return c.changes;
  }
  return null;
}

/** Suggestions in words, rendered from the fixes. */
export const renderFixes = (fixes: Fix[]): string[] =>
  fixes.map((f) => (f.kind === 'restate' && f.refused ? `${f.text} — ${f.refused}` : f.text));
