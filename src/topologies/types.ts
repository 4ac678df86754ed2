// What a topology supplies: its keys, the network its params describe, its
// hand estimates and the design knobs a fix may turn. No rule logic here.

import type { Figure } from '../engine/figure';
import type { Network } from '../engine/network';
import type { NoiseModel } from '../engine/noise';
import type { Kind } from '../quantity';

/** Plain SI values of params and conditions, by key. */
export type Values = Record<string, number>;

export interface KeySpec {
  key: string;
  kind: Kind;
  description: string;
  /** Required in every spec of this topology. */
  required?: boolean;
  /** Zero is allowed (a load capacitance, a nulling resistor); negatives only with allowNegative. */
  allowZero?: boolean;
  /** Negative values are allowed (a negative supply rail). */
  allowNegative?: boolean;
  /** Value used when the key is absent (conditions). */
  default?: number;
  /** Value `open` stands for (a load resistor that is not there). */
  open?: boolean;
  /** Upper bound where physics sets one (a feedback factor). */
  max?: number;
  /**
   * Plausible range for an integrated block, SI. Outside it by a factor that
   * a prefix slip explains (10³, 10⁶), the value draws a warning.
   */
  plausible?: [number, number];
  /** A natural size of the param in this design, for solving from a value of zero (rz: 1/gm2). */
  scale?: (values: Values) => number;
}

export interface ClaimSpec {
  key: string;
  kind: Kind;
  description: string;
  /** A figure where more is better (margins, gain, speed): a design that beats a typical claim needs no design change, only the claim updated. */
  better?: 'higher' | 'lower';
  /** Params this claim needs beyond the required ones (slew rate needs bias currents). */
  needs?: string[];
  /**
   * Keys a bounded claim may carry beside min/typ/max that say where the
   * figure is taken (`at: 1 MHz`, `band: [10 Hz, 1 MHz]`). Read into the
   * claim's own operating point, as values under `valueKeys`.
   */
  args?: ClaimArg[];
}

export interface ClaimArg {
  key: string;
  kind: Kind;
  description: string;
  /** The value keys the model reads: one for a single value, two for a `[from, to]` pair. */
  valueKeys: [string] | [string, string];
}

/** A design change proposed in closed form by the topology, to be checked through the model. */
export interface DesignHint {
  /** New values of one or more params. */
  changes: Values;
  why: string;
}

export interface HandEstimates {
  figures: Record<string, Figure>;
  /** Where the approximations behind them do not hold. */
  caveats: string[];
}

export interface Topology {
  id: string;
  title: string;
  params: KeySpec[];
  conditions: KeySpec[];
  claims: ClaimSpec[];
  /** The small-signal network of the design at these values. */
  network(values: Values): Network;
  /** Loop feedback factor. */
  beta(values: Values): number;
  /** Large-signal figures that no linear network gives (slew rate). */
  largeSignal(values: Values): Record<string, Figure>;
  /**
   * The input pair of the large-signal settling model: its transconductance
   * and the tail current it saturates at, and any other current limit the
   * model leaves out (an output stage that slews slower); undefined when the
   * tail current is not given.
   */
  inputStage?(values: Values): InputStage | undefined;
  /** Exact figures particular to the topology (an input capacitance), from its network. */
  figures?(values: Values): Record<string, Figure>;
  /** Noise sources of the network at these values (channel and thermal noise), and the textbook input-referred density. */
  noise?(values: Values): NoiseModel;
  /** Params whose sum is the current drawn from the supply (the power claims). */
  supplyCurrents?: string[];
  /**
   * Published sizing guides for the compensation (a Butterworth placement),
   * reported beside the document's values.
   */
  sizing?(values: Values): DesignHint[];
  hand(values: Values, exact: Record<string, Figure>): HandEstimates;
  /** Params worth solving for, per claim, in order of preference. */
  knobs: Record<string, string[]>;
  /** Why the network cannot be solved, in the document's terms, and where (user-defined networks). */
  diagnose?(): { message: string; pos?: import('../spec/position').Pos } | undefined;
  hints(claim: string, values: Values): DesignHint[];
}

/** The input pair as the large-signal settling model sees it. */
export interface InputStage {
  gm: number;
  tail: number;
  /** A slew limit outside the input stage that is lower than the input stage's own. */
  slowerLimit?: { slewRate: number; what: string };
}
