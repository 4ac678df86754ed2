// What a topology supplies: its keys, the network its params describe, its
// hand estimates and the design knobs a fix may turn. No rule logic here.

import type { Figure } from '../engine/figure';
import type { Network } from '../engine/network';
import type { Kind } from '../quantity';

/** Plain SI values of params and conditions, by key. */
export type Values = Record<string, number>;

export interface KeySpec {
  key: string;
  kind: Kind;
  description: string;
  /** Required in every spec of this topology. */
  required?: boolean;
  /** Zero is allowed (a load capacitance, a nulling resistor); negatives never are. */
  allowZero?: boolean;
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
  /** Exact figures particular to the topology (an input capacitance), from its network. */
  figures?(values: Values): Record<string, Figure>;
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
