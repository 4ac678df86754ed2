// Every figure the engine or a topology returns says how it was obtained, so
// reports and `explain` can show the derivation, and says why when it does
// not exist (no NaN ever reaches a report).

export type FigureUnit = 'Hz' | 'dB' | 'deg' | 'V/s' | 'V/V' | 'F' | 'V/\u221aHz' | 'V' | 'A' | 'W' | 'MHz\u00b7pF/mA' | 's' | 'ratio';

export type Method =
  /** From the exact poles and zeros of the network (generalized eigenvalues, Newton-refined). */
  | 'exact-roots'
  /** From a nodal solve of the network at one frequency (DC included). */
  | 'nodal-solve'
  /** From a root search on the exact frequency response. */
  | 'frequency-search'
  /** A first-order hand formula (pole splitting and friends). */
  | 'hand-estimate'
  /** A large-signal formula (slew rate). */
  | 'large-signal'
  /** From every noise source's exact transfer to the output (adjoint solves), integrated where a band asks for it. */
  | 'noise-analysis'
  /** From the stated bias currents and supply (power, supply current). */
  | 'bias-currents'
  /** From a root search on the exact small-signal step response (its modes, by partial fractions). */
  | 'time-search'
  /** From a time integration of a large-signal model, ending on the exact linear response. */
  | 'transient';

export interface Figure {
  /** In the canonical unit; null when the figure does not exist (see `reason`). */
  value: number | null;
  unit: FigureUnit;
  method: Method;
  /** One line of derivation a designer can follow. */
  how: string;
  reason?: string;
  notes?: string[];
  /**
   * A margin that does not exist because nothing limits it (no phase crossing
   * where |βA| < 1, and the closed loop is stable): better than any value for
   * a min bound. Decisions read this flag, never the wording of `reason`.
   */
  unbounded?: boolean;
  /**
   * For a margin withheld because the closed loop is not known to be stable:
   * the value read off the open-loop response all the same (what a Bode plot
   * shows), which means nothing for an unstable loop.
   */
  openLoop?: number;
}

export const figure = (value: number, unit: FigureUnit, method: Method, how: string, notes?: string[]): Figure =>
  notes && notes.length ? { value, unit, method, how, notes } : { value, unit, method, how };

export const missing = (unit: FigureUnit, method: Method, how: string, reason: string, notes?: string[]): Figure =>
  notes && notes.length ? { value: null, unit, method, how, reason, notes } : { value: null, unit, method, how, reason };

/** A margin that nothing limits (see Figure.unbounded). */
export const unboundedMargin = (unit: FigureUnit, method: Method, how: string, reason: string, notes?: string[]): Figure => ({
  ...missing(unit, method, how, reason, notes),
  unbounded: true,
});
