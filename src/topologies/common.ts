// Keys and helpers that several topologies share.

import type { ClaimSpec, KeySpec, Values } from './types';

/** Load and loop conditions of an amplifier in a feedback loop. */
export const loadConditions: KeySpec[] = [
  { key: 'cl', kind: 'capacitance', allowZero: true, default: 0, description: 'load capacitance' },
  { key: 'rl', kind: 'resistance', open: true, description: 'load resistance (absent or `open`: none)' },
  { key: 'beta', kind: 'ratio', default: 1, max: 1, description: 'feedback factor of the loop, 1 for a unity-gain buffer' },
  // Closed loop and time domain (issue 12): read by spec/schema.ts with their own forms.
  { key: 'gain', kind: 'ratio', allowNegative: true, description: 'closed-loop signal gain with ideal resistive feedback: +10 non-inverting (β = 1/G), -4 inverting (β = 1/(1 + |G|)), in V/V or dB' },
  { key: 'step', kind: 'voltage', description: 'step of the output the settling time is for (`{input: 100 mV}` for an input step); absent: small-signal settling', plausible: [1e-6, 100] },
];

/** Value key of the settling claim's own `band:` and of an input step (`step: {input: 100 mV}`). */
export const SETTLING_BAND = 'settling_time@band';
export const STEP_INPUT = 'step@input';
/** The settling band when a claim states none: 0.1 % of the final value. */
export const DEFAULT_SETTLING_BAND = 1e-3;

/** Claims of the loop closed with ideal resistive feedback, in the frequency and the time domain. */
function closedLoopClaims(): ClaimSpec[] {
  return [
    { key: 'closed_loop_gain', kind: 'gain', description: 'closed-loop DC gain with the finite open-loop gain, |A/(1 + βA)| (times 1 − β inverting)' },
    { key: 'closed_loop_bandwidth', kind: 'frequency', better: 'higher', description: '−3 dB frequency of the closed-loop signal response' },
    { key: 'peaking', kind: 'gain', better: 'lower', description: 'maximum of the closed-loop magnitude above its DC value' },
    { key: 'overshoot', kind: 'ratio', better: 'lower', description: 'overshoot of the small-signal step response, a fraction of the final value (`5 %`)' },
    { key: 'rise_time', kind: 'time', better: 'lower', description: '10–90 % rise time of the small-signal step response' },
    {
      key: 'settling_time',
      kind: 'time',
      better: 'lower',
      description: 'time after which the output stays within `band` of its final value, for the `step` condition (small-signal without one)',
      args: [{ key: 'band', kind: 'ratio', description: 'settling band, a fraction of the final value (0.1 % when absent)', valueKeys: [SETTLING_BAND] }],
    },
  ];
}

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
  ...closedLoopClaims(),
];

/**
 * β of ideal resistive feedback around a stage of signal gain G: 1/G
 * non-inverting (G ≥ 1), 1/(1 + |G|) inverting (G < 0, noise gain 1 + |G|);
 * NaN where no such feedback exists (0 < G < 1, G = 0).
 */
export function betaFromGain(gain: number): number {
  if (gain >= 1) return 1 / gain;
  if (gain < 0 && Number.isFinite(gain)) return 1 / (1 - gain);
  return NaN;
}

/** The loop's feedback factor: β as stated, else from a stated gain, else 1. */
export const loopBeta = (v: Values): number => v.beta ?? (v.gain !== undefined ? betaFromGain(v.gain) : 1);

/**
 * The ideal signal gain at these values: the stated gain where it still
 * matches β; where β alone was changed (a table row's `β = 0.1`), the gain of
 * the same sense for that β; 1/β without a stated gain.
 */
export function signalGain(v: Values, beta: number): number {
  const g = v.gain;
  if (g !== undefined && Number.isFinite(g) && g !== 0) {
    if (Math.abs(betaFromGain(g) - beta) <= 1e-9 * beta) return g;
    return g < 0 ? 1 - 1 / beta : 1 / beta;
  }
  return 1 / beta;
}

/** r ∥ rl, where an absent or infinite rl is no load. */
export const parallel = (r: number, rl: number | undefined): number =>
  rl !== undefined && Number.isFinite(rl) ? (r * rl) / (r + rl) : r;

// Noise and power (issue 13): the keys every amplifier topology shares.

/** Value keys of the noise claims' own arguments (`at:`, `band:`), carried in the claim's operating point. */
export const INPUT_NOISE_AT = 'input_noise@at';
export const NOISE_BAND_FROM = 'integrated_noise@from';
export const NOISE_BAND_TO = 'integrated_noise@to';

/** Channel-noise factor and 1/f corner, for topologies built from transistor params. */
export const noiseParams: KeySpec[] = [
  // 2/3 for a long-channel device in saturation (common practice, from memory; short channels run higher).
  { key: 'gamma', kind: 'ratio', default: 2 / 3, description: 'channel-noise factor γ of the devices (2/3 long-channel)', plausible: [0.3, 5] },
  { key: 'f_corner', kind: 'frequency', description: '1/f corner of the input-referred noise density', plausible: [1e-3, 1e9] },
];

/** Current drawn by the bias network and references, counted in the supply current. */
export const biasCurrentParam: KeySpec = { key: 'i_bias', kind: 'current', description: 'current of the bias network and references (supply current only)', plausible: [1e-10, 0.1] };

/** The temperature of the noise figures; 300 K when absent (handled by the noise code, so messages do not list it). */
export const temperatureCondition: KeySpec = { key: 'temperature', kind: 'temperature', description: 'absolute temperature of the noise figures (300 K when absent)', plausible: [1, 1000] };

/** The supply: one voltage, or the two rails. */
export const supplyConditions: KeySpec[] = [
  { key: 'supply', kind: 'voltage', description: 'supply voltage (or give vdd and vss)', plausible: [0.1, 100] },
  { key: 'vdd', kind: 'voltage', allowNegative: true, allowZero: true, description: 'positive supply rail' },
  { key: 'vss', kind: 'voltage', allowNegative: true, allowZero: true, description: 'negative supply rail (0 when absent)' },
];

/** input_noise and integrated_noise, needing the params that describe the noise of the load. */
export function noiseClaims(needs: string[] = []): ClaimSpec[] {
  const n = needs.length ? { needs } : {};
  return [
    {
      key: 'input_noise',
      kind: 'noise',
      better: 'lower',
      description: 'input-referred noise density (the white floor, or at `at:`)',
      ...n,
      args: [{ key: 'at', kind: 'frequency', description: 'frequency of the density', valueKeys: [INPUT_NOISE_AT] }],
    },
    {
      key: 'integrated_noise',
      kind: 'voltage',
      better: 'lower',
      description: 'rms noise: input-referred over `band:`, or at the output of the closed loop over all frequencies',
      ...n,
      args: [{ key: 'band', kind: 'frequency', description: 'band [from, to] of the input-referred rms', valueKeys: [NOISE_BAND_FROM, NOISE_BAND_TO] }],
    },
  ];
}

/** supply_current, power and (for amplifiers with a gain-bandwidth) the figure of merit. */
export function powerClaims(needs: string[], withFom: boolean): ClaimSpec[] {
  return [
    { key: 'supply_current', kind: 'current', better: 'lower', description: 'current drawn from the supply (the sum of the bias currents)', needs },
    { key: 'power', kind: 'power', better: 'lower', description: 'power drawn from the supply, I·V', needs },
    ...(withFom ? [{ key: 'fom', kind: 'fom' as const, better: 'higher' as const, description: 'figure of merit GBW·CL/I (MHz·pF/mA)', needs }] : []),
  ];
}
