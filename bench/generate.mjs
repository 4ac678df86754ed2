// Seeded spec generators and fixed specs for the benchmarks (bench/engine.mjs).
// The designs are random but plausible for an integrated block (an invented
// family of sensor front ends). Their claims are computed from the exact
// figures of the closed-form reference (bench/minimal-two-stage.mjs): a
// consistent spec claims what the network gives, a failing spec has one or
// two claims moved well outside their tolerance.

import { twoStageFigures } from './minimal-two-stage.mjs';

/** mulberry32: small, fast, good enough for test data. */
export function rng(seed) {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

const PREFIX = [
  [1e-15, 'f'],
  [1e-12, 'p'],
  [1e-9, 'n'],
  [1e-6, 'µ'],
  [1e-3, 'm'],
  [1, ''],
  [1e3, 'k'],
  [1e6, 'M'],
  [1e9, 'G'],
];

function scaleOf(value) {
  let [scale, p] = PREFIX[0];
  for (const [s, q] of PREFIX) if (Math.abs(value) >= s) [scale, p] = [s, q];
  return [scale, p];
}

/** 3 significant digits with an engineering prefix: 2.2e6, 'Ω' → '2.2 MΩ'. */
export function eng(value, unit) {
  const [scale, p] = scaleOf(value);
  return `${+(value / scale).toPrecision(3)} ${p}${unit}`;
}

/** The value that eng(value) writes, so that claims are computed from what the spec says. */
export const written = (value) => {
  const [scale] = scaleOf(value);
  return +(value / scale).toPrecision(3) * scale;
};

/**
 * A random two-stage Miller design in SI units, already rounded to what a
 * spec writes: {gm1, r1, c1, gm2, r2, c2, cc, rz?, i1?, i2?, cl, rl?, beta},
 * and which of gm1, gm2, cc are given as ranges (±5…15 % or {min, typ, max}).
 */
export function randomDesign(next) {
  const log = (lo, hi) => written(lo * (hi / lo) ** next());
  const lin = (lo, hi) => lo + (hi - lo) * next();
  const pick = (xs) => xs[Math.floor(next() * xs.length)];
  const v = {
    gm1: log(50e-6, 600e-6),
    r1: log(0.5e6, 5e6),
    c1: log(20e-15, 120e-15),
    gm2: log(0.5e-3, 6e-3),
    r2: log(40e3, 300e3),
    c2: log(50e-15, 300e-15),
    cc: log(0.4e-12, 4e-12),
  };
  if (next() < 0.6) v.rz = written(lin(0.6, 1.6) / v.gm2);
  if (next() < 0.7) {
    v.i1 = log(5e-6, 60e-6);
    v.i2 = written(v.i1 * lin(3, 12));
  }
  v.cl = log(0.5e-12, 12e-12);
  if (next() < 0.5) v.rl = log(5e3, 200e3);
  v.beta = next() < 0.6 ? 1 : pick([0.5, 0.25, 0.1]);
  const ranges = {};
  if (next() < 0.3) {
    for (const key of ['gm1', 'gm2', 'cc']) {
      if (next() < 0.5) ranges[key] = { percent: pick([5, 10, 15]) };
      else ranges[key] = { min: written(v[key] * 0.9), max: written(v[key] * 1.1) };
    }
  }
  return { values: v, ranges };
}

const UNITS = { gm1: 'S', r1: 'Ω', c1: 'F', gm2: 'S', r2: 'Ω', c2: 'F', cc: 'F', rz: 'Ω', i1: 'A', i2: 'A', cl: 'F', rl: 'Ω' };

const slewRate = (v) => Math.min(v.i1 / v.cc, (v.i2 - v.i1) / v.cl);

/** The lowest (worst) phase margin over the typical point and the corners of the ranges. */
function worstPhaseMargin(v, ranges) {
  const keys = Object.keys(ranges);
  let worst = twoStageFigures(v).phaseMarginDeg;
  for (let mask = 0; mask < 1 << keys.length && worst !== null; mask++) {
    const corner = { ...v };
    keys.forEach((k, bit) => {
      const r = ranges[k];
      const high = (mask >> bit) & 1;
      corner[k] = r.percent ? v[k] * (1 + (high ? 1 : -1) * r.percent / 100) : high ? r.max : r.min;
    });
    const pm = twoStageFigures(corner).phaseMarginDeg;
    worst = pm === null ? null : Math.min(worst, pm);
  }
  return worst;
}

const FAMILIES = ['rx-bias', 'tx-ref', 'adc-drv', 'bridge-buf', 'ldo-err', 'vref-buf', 'tia-post', 'dac-out'];

/**
 * Spec i of a seeded family. `failing: false`: every claim holds (typical
 * claims as the exact figures in 3 significant digits, the phase-margin bound
 * 4° under the worst corner). `failing: true`: the same, with one claim (in
 * about a third of the specs two) moved well outside its tolerance — a
 * phase-margin bound above what the design reaches, a gain-bandwidth, DC gain,
 * pole or slew rate that is off — so that the rules explain it and solve for
 * design changes.
 */
export function designSpec(next, i, { failing }) {
  const lin = (lo, hi) => lo + (hi - lo) * next();
  const pick = (xs) => xs[Math.floor(next() * xs.length)];
  const { values: v, ranges } = randomDesign(next);
  const f = twoStageFigures(v);
  const pmWorst = worstPhaseMargin(v, ranges);

  // Claims as numbers first, so that a failing spec can move some of them.
  const claims = { dc_gain: f.dcGainDb };
  if (f.gbwHz !== null) claims.gbw = f.gbwHz;
  if (pmWorst !== null && pmWorst > 10) claims.phase_margin = Math.floor(pmWorst) - 4;
  if (next() < 0.3) claims.p1 = f.p1Hz;
  if (v.i1 !== undefined && next() < 0.8) claims.slew_rate = slewRate(v);
  if (failing) {
    const breakable = ['dc_gain', 'p1'];
    if (claims.gbw !== undefined) breakable.push('gbw');
    if (v.i1 !== undefined) breakable.push('slew_rate');
    if (f.phaseMarginDeg !== null) breakable.push('phase_margin', 'phase_margin');
    const broken = new Set([pick(breakable)]);
    if (next() < 0.3) broken.add(pick(breakable));
    for (const k of broken) {
      if (k === 'phase_margin') claims.phase_margin = Math.ceil(f.phaseMarginDeg) + Math.round(lin(5, 20));
      else if (k === 'dc_gain') claims.dc_gain = f.dcGainDb + (next() < 0.5 ? -1 : 1) * lin(3, 10);
      else if (k === 'gbw') claims.gbw = f.gbwHz * pick([0.6, 0.75, 1.4, 1.6]);
      else if (k === 'p1') claims.p1 = f.p1Hz * pick([0.4, 2.5]);
      else claims.slew_rate = slewRate(v) * pick([0.6, 1.5]);
    }
  }

  const value = (key) => {
    const text = eng(v[key], UNITS[key]);
    const r = ranges[key];
    if (!r) return text;
    return r.percent ? `${text} ±${r.percent}%` : `{min: ${eng(r.min, UNITS[key])}, typ: ${text}, max: ${eng(r.max, UNITS[key])}}`;
  };
  const lines = ['---', 'polecheck: 1', `block: ${pick(FAMILIES)}-${String(i).padStart(4, '0')}`, `title: Generated block ${i} of the bench family`, 'topology: two-stage-miller', 'params:'];
  for (const key of ['gm1', 'r1', 'c1', 'gm2', 'r2', 'c2', 'cc', 'rz', 'i1', 'i2']) if (v[key] !== undefined) lines.push(`  ${key}: ${value(key)}`);
  lines.push('conditions:', `  cl: ${value('cl')}`, `  rl: ${v.rl !== undefined ? value('rl') : 'open'}`, `  beta: ${v.beta}`);
  lines.push('claims:', `  dc_gain: ${claims.dc_gain.toFixed(1)} dB`);
  if (claims.gbw !== undefined) lines.push(`  gbw: ${eng(claims.gbw, 'Hz')}`);
  if (claims.phase_margin !== undefined) lines.push(`  phase_margin: {min: ${claims.phase_margin} deg}`);
  if (claims.p1 !== undefined) lines.push(`  p1: ${eng(claims.p1, 'Hz')}`);
  if (claims.slew_rate !== undefined) lines.push(`  slew_rate: ${+(claims.slew_rate / 1e6).toPrecision(3)} V/µs`);
  lines.push('---', '', `# Generated block ${i}`, '', 'A block of the bench family, generated for throughput measurements.', '');
  if (next() < 0.5) {
    // The same claims again in a datasheet table, as many datasheets state them.
    lines.push('| Parameter | Symbol | Min | Typ | Max | Unit |', '| --- | --- | --- | --- | --- | --- |');
    if (claims.gbw !== undefined) lines.push(`| Gain-bandwidth | GBW | | ${+(claims.gbw / 1e6).toPrecision(3)} | | MHz |`);
    if (claims.phase_margin !== undefined) lines.push(`| Phase margin | PM | ${claims.phase_margin} | | | deg |`);
    lines.push('');
  }
  return lines.join('\n');
}

/** A spec of the (invented) KX-4 front end whose claims hold: exit status 0. */
export const CONSISTENT_SPEC = `---
polecheck: 1
block: kx4-adc-driver
title: ADC driver, KX-4 strain-gauge front end
topology: two-stage-miller
params:
  gm1: 240 µS
  r1: 1.8 MΩ
  c1: 60 fF
  gm2: 2.4 mS
  r2: 120 kΩ
  c2: 150 fF
  cc: 1.5 pF
  rz: 420 Ω
  i1: 24 µA
  i2: 200 µA
conditions:
  cl: 3 pF
  rl: 20 kΩ
  beta: 1
claims:
  dc_gain: 85.0 dB
  gbw: 24.3 MHz
  phase_margin: {min: 68 deg}
  slew_rate: 16.0 V/µs
---

# ADC driver
`;

/** A spec whose phase margin claim fails (no nulling resistor, heavy load): triggers the fix solver. */
export const FAILING_PM_SPEC = [
  '---',
  'polecheck: 1',
  'block: kx4-line-driver',
  'title: Line driver, KX-4 front end (heavy load)',
  'topology: two-stage-miller',
  'params:',
  '  gm1: 300 µS',
  '  r1: 1.5 MΩ',
  '  c1: 80 fF',
  '  gm2: 1.2 mS',
  '  r2: 100 kΩ',
  '  c2: 200 fF',
  '  cc: 0.8 pF',
  '  i1: 30 µA',
  '  i2: 250 µA',
  'conditions:',
  '  cl: 10 pF',
  '  rl: 10 kΩ',
  '  beta: 1',
  'claims:',
  '  gbw: 60 MHz',
  '  phase_margin: {min: 60 deg}',
  '---',
  '',
  '# Line driver',
  '',
].join('\n');

/** The same block with a margin it does reach: the check without the solver. */
export const PASSING_PM_SPEC = FAILING_PM_SPEC.replace('  gbw: 60 MHz\n', '').replace('phase_margin: {min: 60 deg}', 'phase_margin: {min: 5 deg}');

/**
 * Worst case over ranges: 12 params and conditions given as ranges (both
 * notations) and 4 bound claims. The phase-margin bound (70°) holds at the
 * typical point (76.8°) and fails at a corner of the box (about 65°); the
 * other three hold everywhere (closed-form figures, bench/minimal-two-stage.mjs).
 */
export const RANGED_SPEC = `---
polecheck: 1
block: strand-corner-bench
title: Strand bridge buffer over process and load corners
topology: two-stage-miller
params:
  gm1: 240 µS ±15%
  r1: 3.3 MΩ ±20%
  c1: {min: 54 fF, typ: 60 fF, max: 66 fF}
  gm2: 2.4 mS ±15%
  r2: 120 kΩ ±20%
  c2: {min: 135 fF, typ: 150 fF, max: 165 fF}
  cc: 1.5 pF ±10%
  rz: 300 Ω ±20%
  i1: 24 µA ±10%
  i2: 200 µA ±10%
conditions:
  cl: {min: 2.1 pF, typ: 3 pF, max: 3.9 pF}
  rl: 20 kΩ ±20%
claims:
  dc_gain: {min: 80 dB}
  gbw: {min: 15 MHz}
  phase_margin: {min: 70 deg}
  slew_rate: {min: 10 V/µs}
---

# Strand bridge buffer
`;
