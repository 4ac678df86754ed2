// The registry: every rule polecheck runs, in report order.

import type { Rule } from '../src/rule';
import bandwidth from './bandwidth';
import closedLoopStability from './closed-loop-stability';
import compensationSizing from './compensation-sizing';
import conflictingClaims from './conflicting-claims';
import dcGain from './dc-gain';
import dominantPole from './dominant-pole';
import gainBandwidth from './gain-bandwidth';
import gainMargin from './gain-margin';
import handEstimateDrift from './hand-estimate-drift';
import inputCapacitance from './input-capacitance';
import phaseMargin from './phase-margin';
import prefixSlip from './prefix-slip';
import rhpZero from './rhp-zero';
import rhpZeroSpacing from './rhp-zero-spacing';
import secondPole from './second-pole';
import secondPoleSpacing from './second-pole-spacing';
import slewRate from './slew-rate';

export const RULES: readonly Rule[] = [
  dcGain,
  gainBandwidth,
  dominantPole,
  secondPole,
  rhpZero,
  phaseMargin,
  gainMargin,
  closedLoopStability,
  slewRate,
  bandwidth,
  inputCapacitance,
  secondPoleSpacing,
  rhpZeroSpacing,
  handEstimateDrift,
  prefixSlip,
  compensationSizing,
  conflictingClaims,
];
