// Params and conditions → the evaluated model: every claimable figure from
// the exact network, the topology's hand estimates beside them, and caveats.

import { type LoopAnalysis, type NetworkAnalysis, analyzeLoop, analyzeNetwork } from '../engine/analyze';
import { type Figure, figure, missing } from '../engine/figure';
import { NetworkError } from '../engine/network';
import { type Root, rootHz } from '../engine/roots';
import { closedLoopFigures, closedLoopHand } from './closed-loop-figures';
import { noiseHand, noisePowerFigures } from './noise-power';
import type { HandEstimates, Topology, Values } from '../topologies/types';

export interface Model {
  topology: Topology;
  values: Values;
  beta: number;
  analysis: NetworkAnalysis;
  loop: LoopAnalysis;
  /** Exact figures by claim key (canonical units). */
  exact: Record<string, Figure>;
  hand: Record<string, Figure>;
  caveats: string[];
}

export class ModelError extends Error {}

const hz = (r: Root): string => {
  const f = rootHz(r);
  return r.im === 0 ? `${(Math.sign(r.re) * f).toPrecision(4)} Hz` : `${f.toPrecision(4)} Hz (complex, Re ${(r.re / (2 * Math.PI)).toPrecision(3)} Hz)`;
};

let evaluations = 0;

/** Models evaluated so far in this thread: the work counter that bounds a file's design-change searches. */
export const evaluationCount = (): number => evaluations;

export function evaluate(topology: Topology, values: Values): Model {
  evaluations++;
  let analysis: NetworkAnalysis;
  try {
    analysis = analyzeNetwork(topology.network(values));
  } catch (err) {
    if (err instanceof NetworkError) throw new ModelError(err.message);
    throw err;
  }
  const model = new LazyModel(topology, values, analysis);
  // A network whose factored form could not be trusted is swept, and the sweep
  // may find the response unevaluable: say so now, as a model error.
  if (!analysis.factored) {
    try {
      void model.loop.phaseMargin;
    } catch (err) {
      if (err instanceof NetworkError) throw new ModelError(err.message);
      throw err;
    }
  }
  return model;
}

/** A figure whose derivation text is written only when read (most evaluations serve a solver, not a report). */
function lazyFigure(value: number, unit: Figure['unit'], method: Figure['method'], how: () => string, notes?: string[]): Figure {
  let text: string | undefined;
  const f: Figure = {
    value,
    unit,
    method,
    get how(): string {
      return (text ??= how());
    },
  };
  if (notes && notes.length) f.notes = notes;
  return f;
}

const LOOP_FIGURES = new Set(['gbw', 'bandwidth', 'phase_margin', 'gain_margin']);
const ROOT_FIGURES = new Set(['dc_gain', 'p1', 'p2', 'rhp_zero']);

/**
 * A model computes each figure when it is first asked for: a solver that
 * needs the phase margin never builds the gain margin, the hand estimates or
 * the caveat text. The report asks for everything, once.
 */
class LazyModel implements Model {
  readonly beta: number;
  readonly exact: Record<string, Figure>;
  private loopCache: LoopAnalysis | undefined;
  private handCache: HandEstimates | undefined;
  private extraDone = false;

  constructor(
    readonly topology: Topology,
    readonly values: Values,
    readonly analysis: NetworkAnalysis,
  ) {
    this.beta = topology.beta(values);
    const figures: Record<string, Figure> = Object.create(null);
    const compute = (key: string): void => {
      if (ROOT_FIGURES.has(key)) Object.assign(figures, finite(rootFigures(this.analysis, key)));
      else if (LOOP_FIGURES.has(key)) figures[key] = finite({ [key]: loopFigure(this.loop, key) })[key];
      else this.extras(figures);
    };
    const all = (): void => {
      for (const k of [...ROOT_FIGURES, ...LOOP_FIGURES]) if (!(k in figures)) compute(k);
      this.extras(figures);
    };
    this.exact = new Proxy(figures, {
      get(target, key) {
        if (typeof key !== 'string') return undefined;
        if (!(key in target)) compute(key);
        return target[key];
      },
      has(target, key) {
        if (typeof key !== 'string') return false;
        if (!(key in target)) compute(key);
        return key in target;
      },
      ownKeys(target) {
        all();
        return Reflect.ownKeys(target);
      },
      getOwnPropertyDescriptor(target, key) {
        all();
        return Reflect.getOwnPropertyDescriptor(target, key);
      },
    });
  }

  private extras(figures: Record<string, Figure>): void {
    if (this.extraDone) return;
    this.extraDone = true;
    const more = finite({ ...this.topology.largeSignal(this.values), ...this.topology.figures?.(this.values) });
    for (const [k, f] of Object.entries(more)) if (!(k in figures)) figures[k] = f;
    // Noise and power figures cost from nothing (a sum) to an integral over frequency: each is computed when first read.
    for (const [k, make] of Object.entries({ ...noisePowerFigures(this), ...closedLoopFigures(this) })) {
      if (k in figures) continue;
      Object.defineProperty(figures, k, {
        configurable: true,
        enumerable: true,
        get: () => {
          const f = finite({ [k]: make() })[k];
          Object.defineProperty(figures, k, { value: f, configurable: true, enumerable: true, writable: true });
          return f;
        },
      });
    }
  }

  get loop(): LoopAnalysis {
    return (this.loopCache ??= analyzeLoop(this.analysis, this.beta));
  }

  private get handEstimates(): HandEstimates {
    if (!this.handCache) {
      const h = this.topology.hand(this.values, this.exact);
      const closed = closedLoopHand(this);
      this.handCache = { figures: { ...noiseHand(this), ...closed.figures, ...h.figures }, caveats: [...h.caveats, ...closed.caveats] };
    }
    return this.handCache;
  }

  get hand(): Record<string, Figure> {
    return finite(this.handEstimates.figures);
  }

  get caveats(): string[] {
    return this.handEstimates.caveats;
  }
}

function loopFigure(loop: LoopAnalysis, key: string): Figure {
  try {
    return loopFigureOf(loop, key);
  } catch (err) {
    // The response could not be evaluated where a search needed it: a missing figure that says so.
    if (err instanceof NetworkError) return missing(key === 'gain_margin' ? 'dB' : key === 'phase_margin' ? 'deg' : 'Hz', 'frequency-search', 'searched on the exact response', err.message);
    throw err;
  }
}

function loopFigureOf(loop: LoopAnalysis, key: string): Figure {
  if (key === 'gbw') return loop.unityGain;
  if (key === 'bandwidth') return loop.bandwidth;
  if (key === 'phase_margin') return loop.phaseMargin;
  return loop.gainMargin;
}

/** DC gain, p1, p2 and the right-half-plane zero, from the roots (the key asked for and its siblings' cheap parts). */
function rootFigures(analysis: NetworkAnalysis, key: string): Record<string, Figure> {
  const { poles, zeros } = analysis;
  if (key === 'dc_gain') {
    const gainDb = 20 * Math.log10(Math.abs(analysis.dcGain));
    return {
      dc_gain: Number.isFinite(gainDb)
        ? figure(gainDb, 'dB', 'nodal-solve', `A0 = |v(out)/v(in)| from the nodal solve at DC = ${Math.abs(analysis.dcGain).toPrecision(5)} V/V`, analysis.dcGain < 0 ? ['the open-loop gain is inverting at DC'] : undefined)
        : missing('dB', 'nodal-solve', 'A0 from the nodal solve at DC', 'the DC gain is zero: a zero sits at the origin'),
    };
  }
  if (key === 'p1' || key === 'p2') {
    const polesText = (): string => poles.map(hz).join(', ') || 'none';
    const rootNote = analysis.rootsPolished ? 'generalized eigenvalues of (G, C), Newton-refined' : 'generalized eigenvalues of (G, C) (Newton refinement did not converge for every root)';
    const poleFigure = (i: number, name: string): Figure => {
      const p = poles[i];
      if (!p) return missing('Hz', 'exact-roots', rootNote, `the network has ${poles.length} pole${poles.length === 1 ? '' : 's'}: no ${name}`);
      const notes = p.im !== 0 ? [`${name} is one of a complex pair (|p| = ${rootHz(p).toPrecision(4)} Hz, Q = ${(Math.hypot(p.re, p.im) / (2 * Math.abs(p.re))).toPrecision(3)})`] : [];
      if (p.re > 0) notes.push(`${name} is in the right half-plane: the open loop is unstable`);
      return lazyFigure(rootHz(p), 'Hz', 'exact-roots', () => `|${name}| of the poles of A(s): ${polesText()}; ${rootNote}`, notes);
    };
    return { p1: poleFigure(0, 'p1'), p2: poleFigure(1, 'p2') };
  }
  const zerosText = (): string => zeros.map(hz).join(', ') || 'none';
  const rhp = zeros.filter((z) => z.re > 0);
  return {
    rhp_zero: rhp.length
      ? lazyFigure(rootHz(rhp[0]), 'Hz', 'exact-roots', () => `lowest right-half-plane zero of A(s); zeros: ${zerosText()}`, rhp[0].im !== 0 ? ['the right-half-plane zeros are a complex pair'] : undefined)
      // No right-half-plane zero: as far off as a zero can be, so a lower bound on it holds (and a value or an upper bound fails).
      : { ...missing('Hz', 'exact-roots', `zeros of A(s): ${zerosText()}`, zeros.length ? 'A(s) has no zero in the right half-plane' : 'A(s) has no finite zero'), unbounded: true },
  };
}

/**
 * No figure leaves the model as Infinity or NaN: values beyond what double
 * precision represents (a 1e-18 F capacitor in a hand formula) become a
 * missing figure that says so.
 */
function finite(figures: Record<string, Figure>): Record<string, Figure> {
  const out: Record<string, Figure> = {};
  for (const [k, f] of Object.entries(figures)) {
    out[k] = f.value === null || Number.isFinite(f.value)
      ? f
      : missing(f.unit, f.method, f.how, 'the figure has no finite value at these values (a term of its formula vanishes, or the values exceed what double precision resolves)');
  }
  return out;
}
