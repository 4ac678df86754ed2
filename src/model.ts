// Params and conditions → the evaluated model: every claimable figure from
// the exact network, the topology's hand estimates beside them, and caveats.

import { type LoopAnalysis, type NetworkAnalysis, analyzeLoop, analyzeNetwork } from './engine/analyze';
import { type Figure, figure, missing } from './engine/figure';
import { NetworkError } from './engine/network';
import { type Root, rootHz } from './engine/roots';
import type { Topology, Values } from './topologies/types';

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

export function evaluate(topology: Topology, values: Values): Model {
  let analysis: NetworkAnalysis;
  try {
    analysis = analyzeNetwork(topology.network(values));
  } catch (err) {
    if (err instanceof NetworkError) throw new ModelError(err.message);
    throw err;
  }
  const beta = topology.beta(values);
  let loop: LoopAnalysis;
  try {
    loop = analyzeLoop(analysis, beta);
  } catch (err) {
    if (err instanceof NetworkError) throw new ModelError(err.message);
    throw err;
  }
  const { poles, zeros } = analysis;
  const exact: Record<string, Figure> = {};

  const gainDb = 20 * Math.log10(Math.abs(analysis.dcGain));
  exact.dc_gain = Number.isFinite(gainDb)
    ? figure(gainDb, 'dB', 'nodal-solve', `A0 = |v(out)/v(in)| from the nodal solve at DC = ${Math.abs(analysis.dcGain).toPrecision(5)} V/V`, analysis.dcGain < 0 ? ['the open-loop gain is inverting at DC'] : undefined)
    : missing('dB', 'nodal-solve', 'A0 from the nodal solve at DC', 'the DC gain is zero: a zero sits at the origin');
  exact.gbw = loop.unityGain;
  exact.bandwidth = loop.bandwidth;

  const polesText = poles.map(hz).join(', ') || 'none';
  const rootNote = analysis.rootsPolished ? 'generalized eigenvalues of (G, C), Newton-refined' : 'generalized eigenvalues of (G, C) (Newton refinement did not converge for every root)';
  const poleFigure = (i: number, name: string): Figure => {
    const p = poles[i];
    if (!p) return missing('Hz', 'exact-roots', rootNote, `the network has ${poles.length} pole${poles.length === 1 ? '' : 's'}: no ${name}`);
    const notes = p.im !== 0 ? [`${name} is one of a complex pair (|p| = ${rootHz(p).toPrecision(4)} Hz, Q = ${(Math.hypot(p.re, p.im) / (2 * Math.abs(p.re))).toPrecision(3)})`] : [];
    if (p.re > 0) notes.push(`${name} is in the right half-plane: the open loop is unstable`);
    return figure(rootHz(p), 'Hz', 'exact-roots', `|${name}| of the poles of A(s): ${polesText}; ${rootNote}`, notes);
  };
  exact.p1 = poleFigure(0, 'p1');
  exact.p2 = poleFigure(1, 'p2');

  const zerosText = zeros.map(hz).join(', ') || 'none';
  const rhp = zeros.filter((z) => z.re > 0);
  exact.rhp_zero = rhp.length
    ? figure(rootHz(rhp[0]), 'Hz', 'exact-roots', `lowest right-half-plane zero of A(s); zeros: ${zerosText}`, rhp[0].im !== 0 ? ['the right-half-plane zeros are a complex pair'] : undefined)
    : missing('Hz', 'exact-roots', `zeros of A(s): ${zerosText}`, zeros.length ? 'A(s) has no zero in the right half-plane' : 'A(s) has no finite zero');

  exact.phase_margin = loop.phaseMargin;
  exact.gain_margin = loop.gainMargin;
  Object.assign(exact, topology.largeSignal(values), topology.figures?.(values));

  const hand = topology.hand(values, exact);
  return { topology, values, beta, analysis, loop, exact: finite(exact), hand: finite(hand.figures), caveats: hand.caveats };
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
