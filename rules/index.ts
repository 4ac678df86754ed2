// The registry: every rule polecheck runs, in report order.

import type { Rule } from '../src/verdicts/rule';
import bandwidth from './bandwidth';
import closedLoopBandwidth from './closed-loop-bandwidth';
import closedLoopGain from './closed-loop-gain';
import closedLoopStability from './closed-loop-stability';
import compensationSizing from './compensation-sizing';
import conflictingClaims from './conflicting-claims';
import dcGain from './dc-gain';
import dominantPole from './dominant-pole';
import figureOfMerit from './figure-of-merit';
import gainBandwidth from './gain-bandwidth';
import gainMargin from './gain-margin';
import handEstimateDrift from './hand-estimate-drift';
import inputCapacitance from './input-capacitance';
import inputNoise from './input-noise';
import integratedNoise from './integrated-noise';
import overshoot from './overshoot';
import peaking from './peaking';
import phaseMargin from './phase-margin';
import phaseMarginAtGain from './phase-margin-at-gain';
import power from './power';
import prefixSlip from './prefix-slip';
import rhpZero from './rhp-zero';
import rhpZeroSpacing from './rhp-zero-spacing';
import riseTime from './rise-time';
import secondPole from './second-pole';
import secondPoleSpacing from './second-pole-spacing';
import settlingTime from './settling-time';
import slewRate from './slew-rate';
import supplyCurrent from './supply-current';

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
  closedLoopGain,
  closedLoopBandwidth,
  peaking,
  overshoot,
  riseTime,
  settlingTime,
  inputNoise,
  integratedNoise,
  supplyCurrent,
  power,
  figureOfMerit,
  secondPoleSpacing,
  rhpZeroSpacing,
  phaseMarginAtGain,
  handEstimateDrift,
  prefixSlip,
  compensationSizing,
  conflictingClaims,
];
