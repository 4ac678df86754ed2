// The user-defined `network` topology against ngspice 39 (Debian package
// `ngspice`), run live: the netlist is written straight from the spec's
// `network:` block (element by element, SPICE G convention: the current leaves
// `from` and enters `into`), not from the engine's network. Designs: the demo
// spec specs/strand/feedforward-amp.md and seeded random variations of its
// element values (±60 %), with β = 1 and β = 0.3.
import { readFileSync } from 'node:fs';
import { load } from 'js-yaml';
import { describe, expect, it } from 'vitest';
import { checkText } from '../../../src/check';
import { parseQuantity } from '../../../src/quantity';
import { mulberry32 } from '../designs';
import { MARK, analysisControl, spiceNum } from '../netlist';
import { metricsFromSweep, ngspiceAvailable, parseAc, parsePz, parseScalars, runNetlist, section, unwrapPhaseDeg } from '../ngspice';

const BARS = { dcGainDb: 0.01, freqRel: 1e-3, phaseDeg: 0.1 };
const text = readFileSync('specs/strand/feedforward-amp.md', 'utf8');
const front = load(text.split(/^---\s*$/m)[1]) as {
  network: { input: string; output: string; elements: Record<string, { kind: string; between?: unknown[]; into?: unknown; from?: unknown; control?: unknown[]; value: string }> };
  conditions: { cl: string };
};
const kindOf = { resistor: 'resistance', capacitor: 'capacitance', transconductance: 'conductance' } as const;
const si = (t: string, kind: keyof typeof kindOf) => {
  const q = parseQuantity(t, kindOf[kind]);
  if (!q.ok) throw new Error(t);
  return q.quantity.value;
};
const node = (n: unknown) => (String(n) === 'gnd' ? '0' : String(n));

function variant(seed: number): { values: Record<string, number>; beta: number } {
  const r = mulberry32(seed);
  const values: Record<string, number> = {};
  for (const [name, e] of Object.entries(front.network.elements)) values[name] = si(e.value, e.kind as keyof typeof kindOf) * (seed === 0 ? 1 : 0.4 + 1.2 * r());
  return { values, beta: seed % 2 ? 0.3 : 1 };
}

function specText(values: Record<string, number>, beta: number): string {
  const lines = text.split('\n');
  return lines
    .map((l) => {
      const m = l.match(/^(\s+)(\w+): \{kind: (\w+),(.*) value: [^}]+\}(.*)$/);
      if (!m || !(m[2] in values)) return l;
      const unit = { resistor: 'Ω', capacitor: 'F', transconductance: 'S' }[m[3]]!;
      return `${m[1]}${m[2]}: {kind: ${m[3]},${m[4]} value: ${values[m[2]].toExponential(12)} ${unit}}`;
    })
    .join('\n')
    .replace(/^ {2}beta: .*$/m, `  beta: ${beta}`);
}

function ngspice(values: Record<string, number>, beta: number) {
  const cl = si(front.conditions.cl, 'capacitor');
  const lines = ['* polecheck network reference', `vin ${node(front.network.input)} 0 dc 0 ac 1`];
  for (const [name, e] of Object.entries(front.network.elements)) {
    const v = spiceNum(values[name]);
    if (e.kind === 'resistor') lines.push(`R${name} ${node(e.between![0])} ${node(e.between![1])} ${v}`);
    else if (e.kind === 'capacitor') lines.push(`C${name} ${node(e.between![0])} ${node(e.between![1])} ${v}`);
    else lines.push(`G${name} ${node(e.from ?? 0)} ${node(e.into)} ${node(e.control![0])} ${node(e.control![1])} ${v}`);
  }
  lines.push(`CL ${node(front.network.output)} 0 ${spiceNum(cl)}`);
  const deck = [...lines, ...analysisControl({ acPointsPerDecade: 1000, fStartHz: 1e-2, fStopHz: 1e13 }), '.end', ''].join('\n').replace(/v\(out\)/g, `v(${node(front.network.output)})`);
  const { stdout } = runNetlist(deck);
  const a0 = Number(parseScalars(section(stdout, MARK.tf).lines).get('transfer_function'));
  const ac = parseAc(section(stdout, MARK.ac).lines);
  const db = ac.re.map((x, i) => 10 * Math.log10(x * x + ac.im[i] * ac.im[i]));
  const ph = unwrapPhaseDeg(ac.re, ac.im);
  return { dcGainDb: 20 * Math.log10(Math.abs(a0)), ...metricsFromSweep(ac.f, db, ph, beta), ...parsePz(section(stdout, MARK.pz).lines) };
}

const available = ngspiceAvailable();
describe.runIf(available || process.env.CI)('the network topology against ngspice, run live', () => {
  it('has ngspice installed', () => expect(available, 'ngspice missing: apt-get install -y ngspice').toBe(true));
  for (let seed = 0; seed < 12; seed++) {
    it(`agrees on ${seed === 0 ? 'the demo design' : `random variation ${seed}`}`, () => {
      const { values, beta } = variant(seed);
      const r = checkText('n.md', specText(values, beta));
      const m = r.model!;
      expect(m, JSON.stringify(r.findings.filter((f) => f.severity === 'error'))).toBeDefined();
      const ng = ngspice(values, beta);
      expect(Math.abs(m.exact.dc_gain.value! - ng.dcGainDb)).toBeLessThan(BARS.dcGainDb);
      expect(Math.abs(m.exact.gbw.value! - ng.unityGainHz!) / ng.unityGainHz!).toBeLessThan(BARS.freqRel);
      expect(Math.abs(m.exact.phase_margin.value! - ng.phaseMarginDeg!)).toBeLessThan(BARS.phaseDeg);
      const mag = (p: { re: number; im: number }) => Math.hypot(p.re, p.im);
      const theirs = [...ng.poles].sort((a, b) => mag(a) - mag(b));
      expect(m.analysis.poles.length).toBe(theirs.length);
      theirs.forEach((p, i) => expect(Math.hypot(p.re - m.analysis.poles[i].re, p.im - m.analysis.poles[i].im) / mag(p)).toBeLessThan(BARS.freqRel));
      for (const z of ng.zeros) expect(Math.min(...m.analysis.zeros.map((q) => Math.hypot(q.re - z.re, q.im - z.im) / mag(z)))).toBeLessThan(BARS.freqRel);
    });
  }
});
