// Keys and helpers that several topologies share.

import type { ClaimSpec, KeySpec } from './types';

/** Load and loop conditions of an amplifier in a feedback loop. */
export const loadConditions: KeySpec[] = [
  { key: 'cl', kind: 'capacitance', allowZero: true, default: 0, description: 'load capacitance' },
  { key: 'rl', kind: 'resistance', open: true, description: 'load resistance (absent or `open`: none)' },
  { key: 'beta', kind: 'ratio', default: 1, max: 1, description: 'feedback factor of the loop, 1 for a unity-gain buffer' },
];

/** The claims of an amplifier used in a feedback loop. */
export const commonClaims: ClaimSpec[] = [
  { key: 'dc_gain', kind: 'gain', better: 'higher', description: 'open-loop DC gain A0' },
  { key: 'gbw', kind: 'frequency', better: 'higher', description: 'unity-gain frequency of the open-loop gain A(jω)' },
  { key: 'p1', kind: 'frequency', description: 'lowest pole frequency of A(s)' },
  { key: 'p2', kind: 'frequency', description: 'second-lowest pole frequency of A(s)' },
  { key: 'rhp_zero', kind: 'frequency', description: 'right-half-plane zero of A(s)' },
  { key: 'phase_margin', kind: 'angle', better: 'higher', description: 'phase margin of the loop gain β·A(jω)' },
  { key: 'gain_margin', kind: 'gain', better: 'higher', description: 'gain margin of β·A(jω)' },
  { key: 'slew_rate', kind: 'slew', better: 'higher', description: 'large-signal slew rate' },
];

/** r ∥ rl, where an absent or infinite rl is no load. */
export const parallel = (r: number, rl: number | undefined): number =>
  rl !== undefined && Number.isFinite(rl) ? (r * rl) / (r + rl) : r;
