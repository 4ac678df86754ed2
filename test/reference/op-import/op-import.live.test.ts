// The operating-point import against real ngspice runs. A transistor-level
// two-stage CMOS amplifier (NMOS input pair with a PMOS mirror load and an
// NMOS tail, a PMOS common-source second stage with an NMOS sink, a Miller
// capacitor), its MOS model cards written here (ngspice's built-in level-1
// model, no body effect, overlap capacitances, no junction capacitances), is
// biased with the loop closed at DC by a 1 GH inductor (open at AC). ngspice's
// `.op` writes the raw file — ASCII and binary — with the device parameters
// saved by `.save @m2[gm] …`; `polecheck sync` imports them into a spec whose
// params name their source; the spec's small-signal figures are then compared
// with ngspice's own AC analysis of the transistor-level circuit.
//
// What the two-stage small-signal model leaves out, so what the bars allow:
// the mirror's pole-zero doublet at the diode node (gm3/(cgs3 + cgs4), some
// hundreds of MHz here) and the feed-forward through cgd2 from the input: they
// take a few degrees of phase at the crossover, not gain or crossover
// frequency. Bars: DC gain 0.1 dB, unity-gain frequency 3 %, phase margin 5°
// (measured: 0.01 dB, 0.8 %, 2.9°).

import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { checkText } from '../../../src/check';
import { readRaw } from '../../../src/sync/raw';
import { planSync, runSync } from '../../../src/sync/sync';
import { ngspiceAvailable } from '../ngspice';

const AMP = `two-stage CMOS amplifier
.model nch nmos level=1 vto=0.5 kp=200u lambda=0.08 gamma=0 tox=10n cgso=0.3n cgdo=0.3n
.model pch pmos level=1 vto=-0.5 kp=80u lambda=0.1 gamma=0 tox=10n cgso=0.3n cgdo=0.3n
vdd vdd 0 1.8
vcm inp 0 dc 0.9 ac 1
* input pair (m1 is the inverting side, fed back), mirror load, tail
m1 n1 inn tail 0 nch w=10u l=1u
m2 out1 inp tail 0 nch w=10u l=1u
m3 n1 n1 vdd vdd pch w=10u l=1u
m4 out1 n1 vdd vdd pch w=10u l=1u
m5 tail bias 0 0 nch w=5u l=1u
* second stage
m6 out out1 vdd vdd pch w=60u l=1u
m7 out bias 0 0 nch w=30u l=1u
* bias
ib vdd bias 10u
m8 bias bias 0 0 nch w=5u l=1u
cc out1 out 1p
cl out 0 2p
* the loop closed at DC, open at AC
lfb out inn 1g
cfb inn 0 1g
`;

const SAVE = '.save @m2[gm] @m2[gds] @m4[gds] @m6[gm] @m6[gds] @m7[gds] @m6[cgs] @m6[cgd] @m2[cgd] @m4[cgd] @m7[cgd] @m2[id] v(out)\n';

const SPEC = `---
polecheck: 1
block: strand-op-import
topology: two-stage-miller
design:
  gds2: {from: "@m2[gds]"}
  gds4: {from: "@m4[gds]"}
  gds6: {from: "@m6[gds]"}
  gds7: {from: "@m7[gds]"}
  cgd6: {from: "@m6[cgd]"}
  cc_drawn: 1 pF
  i1: {typ: 1 µA, from: "2 * @m2[id]"}
params:
  gm1: {from: "@m2[gm]"}
  r1: (1 / gds2) ∥ (1 / gds4)
  c1: {from: "@m6[cgs] + @m2[cgd] + @m4[cgd]"}
  gm2: {from: "@m6[gm]"}
  r2: 1 / (gds6 + gds7)
  c2:
    from: "@m7[cgd]"
  cc: cc_drawn + cgd6
conditions:
  cl: 2 pF
claims:
  dc_gain: 80 dB
---

# Two-stage amplifier, small-signal params from its operating point
`;

const run = (dir: string, args: string[]) => spawnSync('ngspice', args, { cwd: dir, encoding: 'utf8', timeout: 60_000, env: { ...process.env, ...(args.includes('ascii') ? {} : {}) } });

describe.skipIf(!ngspiceAvailable())('operating-point import from ngspice', () => {
  let dir: string;
  let ac: { a0: number; ugf: number; pm: number };
  beforeAll(() => {
    dir = mkdtempSync(join(tmpdir(), 'polecheck-op-'));
    writeFileSync(join(dir, 'op.cir'), `${AMP}${SAVE}.op\n.end\n`);
    // Binary (ngspice's default) and ASCII raw files of the same run.
    let r = run(dir, ['-b', '-r', 'op-binary.raw', 'op.cir']);
    expect(r.status, r.stderr).toBe(0);
    r = spawnSync('ngspice', ['-b', '-r', 'op-ascii.raw', 'op.cir'], { cwd: dir, encoding: 'utf8', timeout: 60_000, env: { ...process.env, SPICE_ASCIIRAWFILE: '1' } });
    expect(r.status, r.stderr).toBe(0);
    // The AC analysis of the same transistor-level circuit: DC gain, unity-gain frequency, phase there.
    const control = '.control\nac dec 400 1 10g\nmeas ac a0 find vdb(out) at=1\nmeas ac ugf when vdb(out)=0\nmeas ac ph find vp(out) when vdb(out)=0\nquit\n.endc\n.end\n';
    writeFileSync(join(dir, 'ac.cir'), `${AMP}${control}`);
    r = run(dir, ['-b', 'ac.cir']);
    expect(r.status, r.stderr).toBe(0);
    const meas = (name: string) => Number(new RegExp(`^${name}\\s*=\\s*(\\S+)`, 'm').exec(r.stdout)![1]);
    // vp is in radians, 0 at DC (the input is the non-inverting one).
    ac = { a0: meas('a0'), ugf: meas('ugf'), pm: 180 + (meas('ph') * 180) / Math.PI };
  }, 120_000);
  afterAll(() => {
    if (dir) rmSync(dir, { recursive: true, force: true });
  });

  it('reads the ASCII and the binary raw file alike', () => {
    const ascii = readRaw(readFileSync(join(dir, 'op-ascii.raw')));
    const binary = readRaw(readFileSync(join(dir, 'op-binary.raw')));
    expect(readFileSync(join(dir, 'op-ascii.raw'), 'latin1')).toContain('\nValues:\n');
    expect(readFileSync(join(dir, 'op-binary.raw'), 'latin1')).toContain('\nBinary:\n');
    expect(ascii[0].plotname).toBe('Operating Point');
    expect(ascii[0].vectors.map((v) => [v.name, v.type])).toEqual(binary[0].vectors.map((v) => [v.name, v.type]));
    for (const [i, v] of ascii[0].vectors.entries()) expect(v.values[0]).toBeCloseTo(binary[0].vectors[i].values[0], 12);
    // The loop holds the output at the common-mode input, 0.9 V (to the offset the finite gain leaves).
    expect(ascii[0].vectors.find((v) => v.name === 'v(out)')!.values[0]).toBeCloseTo(0.9, 2);
  });

  it('sync writes the values, byte-exact elsewhere, and the spec checks against ngspice AC', () => {
    const spec = join(dir, 'amp.md');
    writeFileSync(spec, SPEC);
    const out: string[] = [];
    const io = { stdout: (s: string) => out.push(s), stderr: (s: string) => out.push(s), cwd: dir };
    expect(runSync(['amp.md', '--raw', 'op-binary.raw', '--preview'], io)).toBe(0);
    expect(readFileSync(spec, 'utf8')).toBe(SPEC);
    expect(out.join('')).toContain('+  gm1: {typ: ');
    expect(runSync(['amp.md', '--raw', 'op-binary.raw'], io)).toBe(0);
    const after = readFileSync(spec, 'utf8');
    // Only insertions of `typ: X, ` (and one `typ: X` line) and the replaced i1 value: removing them gives the text back.
    expect(after.replace(/typ: [^,\n]+, /g, '').replace(/\n {4}typ: [^\n]+/, '').replace('{from: "2 * @m2[id]"}', '{typ: 1 µA, from: "2 * @m2[id]"}')).toBe(SPEC);
    // A second run from the ASCII file of the same operating point changes nothing.
    expect(runSync(['amp.md', '--raw', 'op-ascii.raw'], io)).toBe(0);
    expect(readFileSync(spec, 'utf8')).toBe(after);

    const r = checkText('amp.md', after);
    expect(r.findings.filter((f) => f.severity === 'error' && f.claim === null)).toEqual([]);
    const m = r.model!;
    expect(Math.abs(m.exact.dc_gain!.value! - ac.a0)).toBeLessThan(0.1);
    expect(Math.abs(m.exact.gbw!.value! / ac.ugf - 1)).toBeLessThan(0.03);
    expect(Math.abs(m.exact.phase_margin!.value! - ac.pm)).toBeLessThan(5);
    // The tail current through the design quantity: twice the branch current.
    expect(r.spec!.params.get('i1')!.typ.quantity.value).toBeGreaterThan(9e-6);
  });

  it('missing vectors, stale mappings and unit mismatches are errors; the file is left alone', () => {
    const plots = readRaw(readFileSync(join(dir, 'op-binary.raw')));
    const cases: Array<[string, string, string]> = [
      ['gm1: {from: "@m2[gm]"}', 'gm1: {from: "@m2[gmbs]"}', '`@m2[gmbs]` is not in the operating point; ngspice writes a device parameter only when asked: add `.save @m2[gmbs]` to the netlist (saved for `m2`: @m2[gm], @m2[gds], @m2[cgd], @m2[id])'],
      ['gm1: {from: "@m2[gm]"}', 'gm1: {from: "@m9[gm]"}', 'no vector of the device `m9` is in the operating point: the mapping is stale'],
      ['gm1: {from: "@m2[gm]"}', 'gm1: {from: "@m6[cgs]"}', '`gm1` (from `@m6[cgs]`) gives a capacitance (A·s/V), but `gm1` is a conductance (A/V): the units do not match'],
      ['gds2: {from: "@m2[gds]"}', 'gds2: {typ: 1 pF, from: "@m2[gds]"}', 'gives a conductance (A/V), but `gds2` is a capacitance (A·s/V)'],
    ];
    for (const [from, to, message] of cases) {
      const text = SPEC.replace(from, to);
      const plan = planSync(text, plots);
      expect(plan.fixed).toBe(text);
      expect(plan.problems.map((p) => p.message).join('\n')).toContain(message);
      const line = text.split('\n').findIndex((l) => l.includes(to)) + 1;
      expect(plan.problems[0].line).toBe(line);
    }
    const acPlots = readRaw(Buffer.from('Title: x\nDate: y\nPlotname: AC Analysis\nFlags: complex\nNo. Variables: 1\nNo. Points: 1\nVariables:\n\t0\tfrequency\tfrequency\nValues:\n 0\t1,0\n'));
    expect(planSync(SPEC, acPlots).problems[0].message).toContain('the raw file holds no operating point (its plots: AC Analysis)');
  });
});
