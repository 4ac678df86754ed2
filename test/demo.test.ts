// The demo design repository (specs/): the consistent blocks pass without a
// finding, the two stale ones are flagged exactly as expected. The stale
// figures were chosen by the authors of the demo: vcm-buffer quotes the
// pole-splitting estimates, thermo-amp the figures of a larger cc (1.5 pF).
import { readFileSync, readdirSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { checkText } from '../src/check';

const dir = 'specs/strand';
const check = (name: string) => checkText(join(dir, name), readFileSync(join(dir, name), 'utf8'));

describe('demo specs', () => {
  const consistent = [
    'bridge-preamp.md',
    'adc-driver.md',
    'ref-buffer.md',
    'tia-core.md',
    'ldo-error-amp.md',
    'line-driver.md',
    'sense-ota.md',
    'mux-gain-stage.md',
    'feedforward-amp.md',
  ];
  it('has at least five blocks, most of them consistent, and every topology', () => {
    const all = readdirSync(dir).filter((f) => f.endsWith('.md'));
    expect(all.length).toBeGreaterThanOrEqual(7);
    const topologies = new Set(all.map((f) => check(f).spec?.topology.id));
    expect([...topologies].sort()).toEqual(['common-source', 'network', 'single-stage', 'three-stage-nested-miller', 'two-stage-miller']);
    expect(consistent.every((c) => all.includes(c))).toBe(true);
  });

  for (const name of consistent) {
    it(`${name} passes with no finding`, () => {
      const r = check(name);
      expect(r.skipped).toBe(false);
      expect(r.findings.map((f) => `${f.line}:${f.column} ${f.rule} ${f.message}`)).toEqual([]);
    });
  }

  it('skips the folder README, which is not a spec', () => {
    expect(checkText('specs/README.md', readFileSync('specs/README.md', 'utf8')).skipped).toBe(true);
  });

  const summary = (name: string) => check(name).findings.map((f) => `${f.line}:${f.column} ${f.severity} ${f.rule}`);

  it('flags vcm-buffer, whose figures are hand estimates', () => {
    // Claim findings point at the claim's key (SPEC-FORMAT §4).
    expect(summary('vcm-buffer.md')).toEqual([
      '22:3 error gain-bandwidth',
      '22:3 warning hand-estimate-drift',
      '23:3 warning second-pole-spacing',
      '24:3 error phase-margin',
      '24:3 warning hand-estimate-drift',
      '24:3 warning rhp-zero-spacing',
      '26:3 error input-noise',
    ]);
    // Its noise figure counts the input pair alone, 2·4kTγ/gm1 = 13.6 nV/√Hz; the mirror load
    // adds (1 + gm_load1/gm1) = 2× in power (Razavi, ch. 7, from memory): 19.2 nV/√Hz.
    const noise = check('vcm-buffer.md').findings.find((f) => f.rule === 'input-noise')!;
    const kT4 = 4 * 1.380649e-23 * 300;
    expect(noise.computed! / Math.sqrt(((2 * kT4 * (2 / 3)) / 120e-6) * 2)).toBeCloseTo(1, 4);
  });

  it('flags thermo-amp, whose claims predate the smaller cc', () => {
    const r = check('thermo-amp.md');
    expect(summary('thermo-amp.md')).toEqual([
      '21:3 error gain-bandwidth',
      '22:3 error phase-margin',
      '22:3 warning rhp-zero-spacing',
      '22:3 warning second-pole-spacing',
      '23:3 error slew-rate',
      '42:55 error settling-time',
    ]);
    // The closed-loop table was updated for revision B but for one row: the
    // settling time at G = +10 is revision A's. Near a one-pole loop there
    // (84° of margin), settling to 0.1 % takes about ln(1000)/(2π·f−3dB) with
    // f−3dB the row above it, 3.9 MHz: 282 ns, and the 1 V step adds a little slewing.
    const ts = r.findings.find((f) => f.rule === 'settling-time')!;
    expect(ts.computed! / (Math.log(1000) / (2 * Math.PI * 3.9e6))).toBeGreaterThan(1);
    expect(ts.computed! / (Math.log(1000) / (2 * Math.PI * 3.9e6))).toBeLessThan(1.1);
    // The slew rate is i1/cc = 16 µA / 0.9 pF = 17.8 V/µs (Allen & Holberg's
    // two-stage slew limit; the load term (i2 − i1)/(c2 + cl) is higher).
    const sr = r.findings.find((f) => f.rule === 'slew-rate')!;
    expect(sr.computed).toBeCloseTo(16e-6 / 0.9e-12, 0);
    // The phase-margin finding offers a larger cc, re-evaluated by the model.
    const pm = r.findings.find((f) => f.rule === 'phase-margin')!;
    expect(pm.suggestions.some((s) => /^cc = 1\.\d+ pF/.test(s))).toBe(true);
  });
});
