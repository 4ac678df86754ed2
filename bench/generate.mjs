// Seeded generator of varied two-stage Miller specs for the benchmarks.
// The designs are random but plausible for an integrated block (an invented
// family of sensor front ends); the claims are hand estimates with noise, so
// some hold, some fail, and failing ones exercise the suggestion solver.

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

/** 3 significant digits with an engineering prefix: 2.2e6, 'Ω' → '2.20 MΩ'. */
export function eng(value, unit) {
  let [scale, p] = PREFIX[0];
  for (const [s, q] of PREFIX) if (Math.abs(value) >= s) [scale, p] = [s, q];
  return `${+(value / scale).toPrecision(3)} ${p}${unit}`;
}

const FAMILIES = ['rx-bias', 'tx-ref', 'adc-drv', 'bridge-buf', 'ldo-err', 'vref-buf', 'tia-post', 'dac-out'];

export function generateSpec(next, i) {
  const log = (lo, hi) => lo * (hi / lo) ** next();
  const lin = (lo, hi) => lo + (hi - lo) * next();
  const pick = (xs) => xs[Math.floor(next() * xs.length)];
  const p = {
    gm1: log(50e-6, 600e-6),
    r1: log(0.5e6, 5e6),
    c1: log(20e-15, 120e-15),
    gm2: log(0.5e-3, 6e-3),
    r2: log(40e3, 300e3),
    c2: log(50e-15, 300e-15),
    cc: log(0.4e-12, 4e-12),
  };
  const withRz = next() < 0.6;
  const rz = withRz ? lin(0.6, 1.6) / p.gm2 : 0;
  const withBias = next() < 0.7;
  const i1 = log(5e-6, 60e-6);
  const i2 = i1 * lin(3, 12);
  const cl = log(0.5e-12, 12e-12);
  const rl = next() < 0.5 ? log(5e3, 200e3) : Infinity;
  const beta = next() < 0.6 ? 1 : pick([0.5, 0.25, 0.1]);
  const ranged = next() < 0.3;

  const value = (key, v, unit) => {
    const text = eng(v, unit);
    if (!ranged || !['gm1', 'gm2', 'cc'].includes(key)) return text;
    return next() < 0.5 ? `${text} ±${pick([5, 10, 15])} %` : `{min: ${eng(v * 0.9, unit)}, typ: ${text}, max: ${eng(v * 1.1, unit)}}`;
  };
  const lines = ['---', 'polecheck: 1', `block: ${pick(FAMILIES)}-${String(i).padStart(4, '0')}`, `title: Generated block ${i} of the bench family`, 'topology: two-stage-miller', 'params:'];
  lines.push(`  gm1: ${value('gm1', p.gm1, 'S')}`, `  r1: ${eng(p.r1, 'Ω')}`, `  c1: ${eng(p.c1, 'F')}`, `  gm2: ${value('gm2', p.gm2, 'S')}`, `  r2: ${eng(p.r2, 'Ω')}`, `  c2: ${eng(p.c2, 'F')}`, `  cc: ${value('cc', p.cc, 'F')}`);
  if (withRz) lines.push(`  rz: ${eng(rz, 'Ω')}`);
  if (withBias) lines.push(`  i1: ${eng(i1, 'A')}`, `  i2: ${eng(i2, 'A')}`);
  lines.push('conditions:', `  cl: ${eng(cl, 'F')}`);
  lines.push(`  rl: ${Number.isFinite(rl) ? eng(rl, 'Ω') : 'open'}`);
  lines.push(`  beta: ${beta}`);

  // Claims from the hand formulas with noise: most near the model, some off.
  const r2l = Number.isFinite(rl) ? (p.r2 * rl) / (p.r2 + rl) : p.r2;
  const noise = () => (next() < 0.8 ? lin(0.95, 1.05) : lin(0.5, 1.6));
  const claims = [];
  claims.push(`  dc_gain: ${(20 * Math.log10(p.gm1 * p.r1 * p.gm2 * r2l) + (next() < 0.8 ? lin(-0.5, 0.5) : lin(-10, 10))).toFixed(1)} dB`);
  claims.push(`  gbw: ${eng((p.gm1 / (2 * Math.PI * p.cc)) * noise(), 'Hz')}`);
  if (next() < 0.8) claims.push(`  phase_margin: {min: ${Math.round(lin(40, 75))} deg}`);
  if (next() < 0.3) claims.push(`  p1: ${eng((1 / (2 * Math.PI * p.gm2 * p.r1 * r2l * p.cc)) * noise(), 'Hz')}`);
  if (next() < 0.3) claims.push(`  gain_margin: {min: ${Math.round(lin(6, 15))} dB}`);
  if (withBias && next() < 0.8) claims.push(`  slew_rate: ${+((Math.min(i1 / p.cc, (i2 - i1) / cl) * noise()) / 1e6).toPrecision(3)} V/µs`);
  lines.push('claims:', ...claims, '---', '');
  lines.push(`# Generated block ${i}`, '', 'A block of the bench family, generated for throughput measurements.', '');
  if (next() < 0.5) {
    lines.push('| Parameter | Symbol | Min | Typ | Max | Unit |', '| --- | --- | --- | --- | --- | --- |', `| Gain-bandwidth | GBW | | ${(p.gm1 / (2 * Math.PI * p.cc) / 1e6).toFixed(1)} | | MHz |`, '| Phase margin | PM | 45 | | | deg |', '');
  }
  return lines.join('\n');
}

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
