// Suggested fixes for a failing claim, every number computed by the model:
// (a) the claim rewritten to what the design gives, in the author's unit and
// precision; (b) the design changes that make the claim hold, each solved for
// and re-evaluated through the model, then checked against the other claims.

import type { Model } from './model';
import { type Kind, type Written, formatLike, formatQuantity, parseQuantity } from './quantity';
import type { RuleContext } from './rule';
import type { ClaimEntry } from './spec/types';
import type { Values } from './topologies/types';
import { type BoundVerdict, THIN_FRACTION, holdsAll, judge, toleranceFor } from './verdict';

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

const key = (entry: ClaimEntry, bound: 'typ' | 'min' | 'max', value: string): string =>
  bound === 'typ' && entry.plain ? `\`${entry.key}: ${value}\`` : `\`${entry.key}: {${bound}: ${value}}\``;

/** (a): restate the claim as the model gives it. */
export function correctedClaim(entry: ClaimEntry, verdicts: BoundVerdict[], computed: number, where: string): string[] {
  const out: string[] = [];
  for (const v of verdicts) {
    if (v.outcome !== 'fails') continue;
    const written = entry[v.bound]!.quantity.written;
    const side = v.bound === 'min' ? 'at-most' : v.bound === 'max' ? 'at-least' : 'nearest';
    const text = formatBound(computed, written, entry.spec.kind, side);
    if (entry.source === 'table') {
      const cell = v.bound === 'typ' ? 'Typ' : v.bound === 'min' ? 'Min' : 'Max';
      out.push(v.bound === 'typ'
        ? `if the design is right, the ${cell} cell of \`${entry.label}\` should read \`${text}\` (model value at ${where})`
        : `if the design stands, the ${cell} cell of \`${entry.label}\` the model supports is \`${text}\` (at ${where})`);
      continue;
    }
    out.push(v.bound === 'typ'
      ? `if the design is right, the claim should read ${key(entry, 'typ', text)} (model value at ${where})`
      : `if the design stands, the bound the model supports is ${key(entry, v.bound, text)} (at ${where})`);
  }
  return out;
}

interface Solved {
  changes: Values;
  model: Model;
  figure: number;
  why?: string;
}

/** Where to aim: the typical value, or a bound plus the thin-margin allowance. */
function targetOf(entry: ClaimEntry, verdicts: BoundVerdict[], kind: Kind, ctx: RuleContext): number | undefined {
  const failing = verdicts.find((v) => v.outcome === 'fails');
  if (!failing) return undefined;
  const t = toleranceFor(kind, ctx.tolerances);
  const margin = (c: number) => (t.relative ? Math.abs(c) * t.value : t.value) * THIN_FRACTION * 1.5;
  if (failing.bound === 'typ') return failing.claimed;
  return failing.bound === 'min' ? failing.claimed + margin(failing.claimed) : failing.claimed - margin(failing.claimed);
}

function figureAt(ctx: RuleContext, claim: string, changes: Values): { model: Model; value: number | null } | null {
  const m = ctx.withChanges(changes);
  return m ? { model: m, value: m.exact[claim]?.value ?? null } : null;
}

/** Solves for `param` so that the claim's figure meets `target`, nearest to the current value. */
function solveParam(ctx: RuleContext, entry: ClaimEntry, param: string, base: number, target: number): Solved | null {
  const spec = ctx.spec.topology.params.find((p) => p.key === param);
  if (!spec) return null;
  // A param at zero (no nulling resistor yet) is searched around its natural size.
  if (!(base > 0)) base = spec.scale?.(ctx.model.values) ?? 0;
  if (!(base > 0)) return null;
  const f = (x: number): number | null => {
    const r = figureAt(ctx, entry.key, { [param]: x });
    return r && r.value !== null ? r.value - target : null;
  };
  // Scan two decades either side on a log grid, then bisect the bracket nearest the current value.
  const steps = 8;
  const grid: Array<{ x: number; d: number | null }> = [];
  for (let i = -steps; i <= steps; i++) {
    const x = base * 10 ** ((2 * i) / steps);
    grid.push({ x, d: f(x) });
  }
  let best: [number, number] | null = null;
  let bestDist = Infinity;
  for (let i = 1; i < grid.length; i++) {
    const a = grid[i - 1];
    const b = grid[i];
    if (a.d === null || b.d === null || a.d * b.d > 0) continue;
    const dist = Math.min(Math.abs(Math.log(a.x / base)), Math.abs(Math.log(b.x / base)));
    if (dist < bestDist) {
      bestDist = dist;
      best = [a.x, b.x];
    }
  }
  if (!best) return null;
  // Illinois (regula falsi that keeps the bracket) on log x: a few evaluations instead of thirty.
  let [a, b] = best.map(Math.log) as [number, number];
  let fa = f(Math.exp(a))!;
  let fb = f(Math.exp(b))!;
  for (let i = 0; i < 30 && Math.abs(b - a) > 1e-6; i++) {
    let x = b - (fb * (b - a)) / (fb - fa);
    if (!(x > Math.min(a, b) && x < Math.max(a, b))) x = 0.5 * (a + b);
    const fx = f(Math.exp(x));
    if (fx === null) return null;
    if (fx === 0) {
      a = b = x;
      break;
    }
    if (fx * fb < 0) {
      a = b;
      fa = fb;
    } else fa /= 2;
    b = x;
    fb = fx;
  }
  const lo = Math.exp(Math.min(a, b));
  const hi = Math.exp(Math.max(a, b));
  const x = Math.sqrt(lo * hi);
  // Round to three digits on whichever side keeps the claim, re-evaluating both.
  const e = 10 ** (Math.floor(Math.log10(x)) - 2);
  for (const candidate of [Math.round(x / e) * e, Math.floor(x / e) * e, Math.ceil(x / e) * e, x]) {
    const r = figureAt(ctx, entry.key, { [param]: candidate });
    if (!r) continue;
    const ok = holdsAll(judge(entry, r.value, r.model.exact[entry.key], toleranceFor(entry.spec.kind, ctx.tolerances)));
    if (ok && r.value !== null) return { changes: { [param]: candidate }, model: r.model, figure: r.value };
  }
  return null;
}

/** Claims of the document that fail under a changed design, e.g. "gbw 14.9 MHz (claimed 23 MHz)". */
export function brokenClaims(ctx: RuleContext, model: Model, except: string): Array<{ key: string; text: string }> {
  const out: Array<{ key: string; text: string }> = [];
  for (const c of ctx.spec.claims) {
    if (c.key === except) continue;
    const fig = model.exact[c.key];
    const verdicts = judge(c, fig?.value ?? null, fig, toleranceFor(c.spec.kind, ctx.tolerances));
    if (holdsAll(verdicts)) continue;
    const claimed = [c.typ && c.typ.quantity.written.text, c.min && `≥ ${c.min.quantity.written.text}`, c.max && `≤ ${c.max.quantity.written.text}`].filter(Boolean).join(', ');
    out.push({ key: c.key, text: `${c.key} ${fig?.value === null || fig === undefined ? 'has no value' : `becomes ${formatQuantity(fig.value, c.spec.kind)}`} (claimed ${claimed})` });
  }
  return out;
}

/** (b): design changes that make the claim hold, with their effect on the other claims. */
export function designChanges(ctx: RuleContext, entry: ClaimEntry, verdicts: BoundVerdict[]): string[] {
  const kind = entry.spec.kind;
  const target = targetOf(entry, verdicts, kind, ctx);
  if (target === undefined) return [];
  // A design that beats its typical claim is not to be made worse: only the claim is stale.
  const current = ctx.model.exact[entry.key]?.value;
  const failing = verdicts.find((v) => v.outcome === 'fails');
  if (failing?.bound === 'typ' && current !== null && current !== undefined && entry.spec.better) {
    if (entry.spec.better === 'higher' ? current > failing.claimed : current < failing.claimed) return [];
  }
  const values = ctx.model.values;
  const topo = ctx.spec.topology;
  const solved: Solved[] = [];
  for (const hint of topo.hints(entry.key, values)) {
    const r = figureAt(ctx, entry.key, hint.changes);
    if (!r) continue;
    if (holdsAll(judge(entry, r.value, r.model.exact[entry.key], toleranceFor(kind, ctx.tolerances))) && r.value !== null) {
      solved.push({ changes: hint.changes, model: r.model, figure: r.value, why: hint.why });
    }
  }
  for (const param of topo.knobs[entry.key] ?? []) {
    // Aim a little past a bound; if that is out of reach, the bound itself.
    const s = solveParam(ctx, entry, param, values[param] ?? 0, target) ?? (failing && failing.bound !== 'typ' ? solveParam(ctx, entry, param, values[param] ?? 0, failing.claimed) : null);
    if (s) solved.push(s);
  }
  const out: string[] = [];
  const conflicts = new Set<string>();
  let anyClean = false;
  for (const s of solved) {
    const change = Object.entries(s.changes).map(([param, value]) => {
      const kind = topo.params.find((p) => p.key === param)?.kind ?? 'ratio';
      const now = values[param];
      const nowText = now === undefined || now === 0 ? 'now none' : `now ${formatQuantity(now, kind)}`;
      return { text: `${param} = ${formatQuantity(value, kind)}`, nowText };
    });
    const why = s.why ? `; ${s.why}` : '';
    const broken = brokenClaims(ctx, s.model, entry.key);
    const effect = broken.length === 0 ? 'and the other claims still hold' : `but then ${broken.map((b) => b.text).join('; ')}`;
    broken.forEach((b) => conflicts.add(b.key));
    if (broken.length === 0) anyClean = true;
    out.push(`${change.map((c) => c.text).join(' and ')} (${change.map((c) => c.nowText).join(', ')}${why}) gives ${formatQuantity(s.figure, kind)}, ${effect}`);
  }
  if (solved.length && !anyClean) {
    const tried = [...new Set(solved.flatMap((s) => Object.keys(s.changes)))].join(', ');
    out.push(`no single change of ${tried} meets every claim: ${entry.key} conflicts with ${[...conflicts].join(', ')}`);
  }
  if (!solved.length && (topo.knobs[entry.key]?.length ?? 0) > 0) {
    out.push(`no value of ${topo.knobs[entry.key].join(' or ')} within a factor of 100 meets the claim on its own`);
  }
  return out;
}
