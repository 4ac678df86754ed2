// Claims against figures: tolerances (SPEC-FORMAT §2 defaults), the verdict,
// and the wording of "claimed … model gives … (by how much)".

import type { Figure } from '../engine/figure';
import { type Kind, formatQuantity } from '../quantity';
import type { ClaimEntry } from '../spec/types';

export interface Tolerance {
  /** Relative (0.1 = ±10 %) or absolute in the canonical unit. */
  value: number;
  relative: boolean;
}

/** Defaults: ±10 % for frequencies and rates, ±1 dB for gains, ±3° for angles. */
export const DEFAULT_TOLERANCES: Record<'frequency' | 'slew' | 'gain' | 'angle', Tolerance> = {
  frequency: { value: 0.1, relative: true },
  slew: { value: 0.1, relative: true },
  gain: { value: 1, relative: false },
  angle: { value: 3, relative: false },
};

export type Tolerances = typeof DEFAULT_TOLERANCES;

export function toleranceFor(kind: Kind, tolerances: Tolerances = DEFAULT_TOLERANCES): Tolerance {
  if (kind === 'frequency' || kind === 'slew' || kind === 'gain' || kind === 'angle') return tolerances[kind];
  return { value: 0.1, relative: true };
}

export const describeTolerance = (t: Tolerance, kind: Kind): string =>
  t.relative ? `±${+(t.value * 100).toPrecision(3)} %` : `±${formatQuantity(t.value, kind, 2)}`;

export type Outcome = 'holds' | 'thin' | 'fails';

export interface BoundVerdict {
  bound: 'typ' | 'min' | 'max';
  outcome: Outcome;
  claimed: number;
  /** Signed distance from the claim, in the canonical unit (computed − claimed). */
  delta: number;
}

/** Fraction of the tolerance under which a bound that holds draws a "thin margin" warning. */
export const THIN_FRACTION = 0.5;

function distance(computed: number, claimed: number, t: Tolerance): number {
  // In units of the tolerance: |d| ≤ 1 is within it.
  return t.relative ? (computed - claimed) / (Math.abs(claimed) * t.value) : (computed - claimed) / t.value;
}

/**
 * Verdict of one claim against one figure value. A null value (the figure
 * does not exist) fails every bound except min of a margin that is unbounded.
 */
export function judge(entry: ClaimEntry, value: number | null, figureValue: Figure | undefined, t: Tolerance): BoundVerdict[] {
  const out: BoundVerdict[] = [];
  const unboundedAbove = value === null && figureValue?.unbounded === true;
  const v = value === null ? (unboundedAbove ? Infinity : NaN) : value;
  if (entry.typ) {
    const c = entry.typ.quantity.value;
    const d = Number.isNaN(v) ? Infinity : distance(v, c, t);
    out.push({ bound: 'typ', outcome: Math.abs(d) <= 1 ? 'holds' : 'fails', claimed: c, delta: v - c });
  }
  if (entry.min) {
    const c = entry.min.quantity.value;
    const d = Number.isNaN(v) ? -Infinity : distance(v, c, t);
    out.push({ bound: 'min', outcome: d < 0 ? 'fails' : d < THIN_FRACTION ? 'thin' : 'holds', claimed: c, delta: v - c });
  }
  if (entry.max) {
    const c = entry.max.quantity.value;
    const d = Number.isNaN(v) ? Infinity : distance(v, c, t);
    out.push({ bound: 'max', outcome: d > 0 ? 'fails' : d > -THIN_FRACTION ? 'thin' : 'holds', claimed: c, delta: v - c });
  }
  return out;
}

export const holdsAll = (verdicts: BoundVerdict[]): boolean => verdicts.every((v) => v.outcome !== 'fails');

/** "18.4 MHz" or "−" style figure text for messages. */
export const show = (value: number | null, kind: Kind): string => (value === null ? 'no value' : formatQuantity(value, kind));

/** A percentage in plain digits: two significant below 100, whole numbers above. */
export const percent = (p: number): string =>
  !Number.isFinite(p) || p >= 1e6 ? 'more than a million' : p >= 100 ? Math.round(p).toString() : p.toPrecision(2);

/** Figures whose distance from a claim reads best as a percentage (noise, power, currents; times and overshoot, whose tolerance is relative). */
const RELATIVE_WORDING: ReadonlySet<Kind> = new Set(['noise', 'voltage', 'current', 'power', 'fom', 'time', 'ratio']);

/** How far off, in words: "17.9° short", "20 % low", "3.2 dB high". */
export function offBy(v: BoundVerdict, computed: number, kind: Kind, t?: Tolerance): string {
  const rel = kind === 'frequency' || kind === 'slew' || RELATIVE_WORDING.has(kind);
  const size = rel ? Math.abs((100 * v.delta) / v.claimed) : Math.abs(v.delta);
  // The tolerance in the same terms, and enough digits that the rounded
  // deviation falls on the same side of it as the verdict ("10.3 % high,
  // tolerance ±10 %", never "10 % high" for a claim that fails).
  const limit = t ? (t.relative ? 100 * t.value : t.value) : undefined;
  const show = (digits: number): string => (rel ? `${digits <= 2 ? percent(size) : +size.toPrecision(digits)} %` : formatQuantity(size, kind, digits));
  const valueOf = (digits: number): number => (rel ? (digits <= 2 ? Number(percent(size)) : +size.toPrecision(digits)) : +size.toPrecision(digits));
  let digits = 2;
  if (limit !== undefined && v.bound === 'typ' && Number.isFinite(size)) {
    const fails = v.outcome === 'fails';
    while (digits < 7 && (fails ? !(valueOf(digits) > limit) : !(valueOf(digits) <= limit))) digits++;
  }
  // A figure a hundred times the claim or more reads as a factor, not as a percentage of many digits.
  if (rel && size >= 1e4 && v.claimed !== 0 && Number.isFinite(size)) {
    const ratio = Math.abs(computed / v.claimed);
    const factor = ratio < 1e6 ? String(Number(ratio.toPrecision(3))) : ratio.toExponential(2).replace('e+', 'e');
    return `${factor} times the ${v.bound === 'typ' ? 'claim' : 'bound'}`;
  }
  const amount = show(digits);
  if (v.bound === 'min') return v.outcome === 'fails' ? `${amount} short` : `only ${amount} above the bound`;
  if (v.bound === 'max') return v.outcome === 'fails' ? `${amount} over` : `only ${amount} below the bound`;
  return `${amount} ${computed > v.claimed ? 'high' : 'low'}`;
}

export const boundSymbol = { typ: '', min: '≥ ', max: '≤ ' } as const;
