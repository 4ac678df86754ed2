// The closed-loop rules against closed forms of loops simple enough to solve
// by hand (each derivation beside its check):
//
// - one pole, A(s) = A0/(1 + s/p1), A0 = gm·rout', p1 = 1/(rout'·C): the
//   closed loop A/(1 + βA) is one pole at p1·(1 + βA0) with DC gain
//   A0/(1 + βA0) (the classic feedback result): bandwidth p1·(1 + βA0)/2π,
//   10–90 % rise time ln 9/(p1·(1 + βA0)), settling to a band b
//   ln(1/b)/(p1·(1 + βA0)), no overshoot, no peaking;
// - two poles, A0/((1 + s/p1)(1 + s/p2)) (a one-stage OTA with a cascode
//   node): the closed loop is ωn²/(s² + 2ζωn·s + ωn²) times A0/(1 + βA0), with
//   ωn² = p1·p2·(1 + βA0) and 2ζωn = p1 + p2; overshoot exp(−πζ/√(1 − ζ²)) and
//   peaking 1/(2ζ√(1 − ζ²)) (K. Ogata, "Modern Control Engineering"; from
//   memory); its phase margin from (1 + ω²/p1²)(1 + ω²/p2²) = (βA0)²;
// - the large step of an integrator loop (rout → ∞) with the pair's current
//   i·tanh(gm·v_id/i): C·dv/dt = i·tanh(x), x = gm·(u − βv)/i, so
//   dx/tanh(x) = −dt/τ with τ = C/(β·gm), sinh(x) = sinh(x0)·e^{−t/τ}, and the
//   output is within b of its final value u/β when x ≤ gm·β·b·(u/β)/i = gm·b·u/i: settling
//   τ·ln(sinh(x0)/sinh(x_b)) (derived here from the tanh model of the pair).
import { describe, expect, it } from 'vitest';
import { checkText } from '../../src/check';
import type { Finding } from '../../src/verdicts/findings';

const TWO_PI = 2 * Math.PI;

/** A single-stage spec; values as written, and where a written piece of text sits (1-based). */
function ota(conditions: string[], claims: string[], extra: { params?: string[]; body?: string; rout?: string } = {}) {
  const lines = ['---', 'polecheck: 1', 'block: strand-cl-test', 'topology: single-stage', 'params:', '  gm: 1 mS', `  rout: ${extra.rout ?? '10 MΩ'}`, '  cout: 100 fF', ...(extra.params ?? []), 'conditions:', ...conditions, 'claims:', ...claims, '---', '', ...(extra.body ?? 'Body.').split('\n'), ''];
  const text = lines.join('\n');
  const r = checkText('t.md', text);
  const at = (needle: string, from = 0) => {
    const i = lines.findIndex((l, k) => k >= from && l.includes(needle));
    if (i < 0) throw new Error(needle);
    return { line: i + 1, column: lines[i].indexOf(needle) + 1 };
  };
  return { text, findings: r.findings, of: (rule: string) => r.findings.filter((f) => f.rule === rule), at, model: r.model! };
}

const where = (f: Finding) => ({ line: f.line, column: f.column });

describe('one-pole loop: closed-loop gain, bandwidth, rise and settling time', () => {
  const gm = 1e-3;
  const rout = 10e6;
  const cl = 2e-12;
  const C = 100e-15 + cl;
  const a0 = gm * rout;
  const p1 = 1 / (rout * C);
  for (const [gainText, beta, inverting] of [['+10', 0.1, false], ['-4 V/V', 0.2, true], ['20 dB', 0.1, false]] as const) {
    it(`at gain ${gainText}`, () => {
      const acl = ((inverting ? 1 - beta : 1) * a0) / (1 + beta * a0);
      const wcl = p1 * (1 + beta * a0);
      const r = ota([`  cl: 2 pF`, `  gain: ${gainText}`], ['  closed_loop_gain: 30 dB', '  closed_loop_bandwidth: 1 MHz', '  rise_time: 1 µs', '  settling_time: {max: 1 ns, band: 0.01 %}', '  overshoot: {max: 1 %}', '  peaking: {max: 0.5 dB}']);
      const one = (rule: string) => {
        const f = r.of(rule);
        expect(f.map((x) => x.message)).toHaveLength(1);
        return f[0];
      };
      const g = one('closed-loop-gain');
      expect(where(g)).toEqual(r.at('closed_loop_gain'));
      expect(g.computed!).toBeCloseTo(20 * Math.log10(acl), 9);
      const bw = one('closed-loop-bandwidth');
      expect(where(bw)).toEqual(r.at('closed_loop_bandwidth'));
      expect(bw.computed! / (wcl / TWO_PI)).toBeCloseTo(1, 9);
      const rt = one('rise-time');
      expect(rt.computed! / (Math.log(9) / wcl)).toBeCloseTo(1, 9);
      const st = one('settling-time');
      expect(where(st)).toEqual(r.at('settling_time'));
      expect(st.computed! / (Math.log(1e4) / wcl)).toBeCloseTo(1, 9);
      expect(st.message).toContain('small-signal settling');
      // A one-pole loop neither overshoots nor peaks: those claims hold.
      expect(r.of('overshoot')).toEqual([]);
      expect(r.of('peaking')).toEqual([]);
      expect(r.model.exact.overshoot.value).toBe(0);
      expect(r.model.exact.peaking.value).toBe(0);
    });
  }
});

describe('two-pole loop: overshoot, peaking and the phase margin at the stated gain', () => {
  // One-stage OTA with a cascode node: p1 = 1/(rout·(cout + cl)), p2 = gm_cas/c_cas.
  const gm = 1e-3;
  const rout = 10e6;
  const C = 100e-15 + 2e-12;
  const a0 = gm * rout;
  const p1 = 1 / (rout * C);
  const p2 = 1e-3 / 3e-12;
  const params = ['  gm_cas: 1 mS', '  c_cas: 3 pF'];
  const secondOrder = (beta: number) => {
    const wn = Math.sqrt(p1 * p2 * (1 + beta * a0));
    const zeta = (p1 + p2) / (2 * wn);
    // (1 + ω²/p1²)(1 + ω²/p2²) = (βA0)², a quadratic in ω².
    const b = 1 / (p1 * p1) + 1 / (p2 * p2);
    const a = 1 / (p1 * p1 * p2 * p2);
    const w2 = (-b + Math.sqrt(b * b + 4 * a * ((beta * a0) ** 2 - 1))) / (2 * a);
    const pm = 180 - ((Math.atan(Math.sqrt(w2) / p1) + Math.atan(Math.sqrt(w2) / p2)) * 180) / Math.PI;
    return { zeta, pm };
  };

  it('overshoot and peaking at G = +1 match the second-order closed forms', () => {
    const { zeta } = secondOrder(1);
    const r = ota(['  cl: 2 pF', '  gain: +1'], ['  overshoot: {max: 5 %}', '  peaking: {max: 0.1 dB}'], { params });
    const os = r.of('overshoot');
    expect(os).toHaveLength(1);
    expect(where(os[0])).toEqual(r.at('overshoot'));
    expect(os[0].computed!).toBeCloseTo(Math.exp((-Math.PI * zeta) / Math.sqrt(1 - zeta * zeta)), 8);
    expect(os[0].message).toMatch(/% of the final value/);
    const pk = r.of('peaking');
    expect(pk).toHaveLength(1);
    expect(pk[0].computed!).toBeCloseTo(20 * Math.log10(1 / (2 * zeta * Math.sqrt(1 - zeta * zeta))), 7);
    // The restated bound reads in the author's percent.
    expect(os[0].suggestions[0]).toMatch(/`overshoot: \{max: \d+(\.\d+)? %\}`/);
  });

  it('warns where a table row uses the loop at a gain whose phase margin is below 45°, computed for that β', () => {
    const at10 = secondOrder(1 / 10);
    const at1 = secondOrder(1);
    expect(at10.pm).toBeGreaterThan(45);
    expect(at1.pm).toBeLessThan(45);
    const body = ['| Parameter | Conditions | Typ | Unit |', '| --- | --- | --- | --- |', '| Overshoot | G = +1 | 40 | % |', '| Overshoot | G = +10 | 0 | % |'].join('\n');
    const r = ota(['  cl: 2 pF', '  gain: +10'], ['  phase_margin: {min: 60 deg}'], { params, body });
    const w = r.of('phase-margin-at-gain');
    expect(w.map((f) => `${f.line}:${f.column} ${f.severity}`)).toEqual([`${r.at('G = +1').line}:${r.at('G = +1').column} warning`]);
    expect(w[0].computed!).toBeCloseTo(at1.pm, 6);
    expect(w[0].message).toContain(`${at1.pm.toFixed(1)}°`);
    // At the front matter's G = +10 the margin is above the threshold: no warning there.
    expect(r.model.loop.phaseMargin.value!).toBeCloseTo(at10.pm, 6);
  });

  it('takes its threshold from the `min` option', () => {
    const r = ota(['  cl: 2 pF', '  gain: +10'], ['  overshoot: {max: 1 %}'], { params });
    const pm = secondOrder(0.1).pm;
    expect(r.of('phase-margin-at-gain')).toEqual([]);
    const strict = checkText('t.md', r.text, { rules: { 'phase-margin-at-gain': { options: { min: Math.ceil(pm) + 1 } } } });
    expect(strict.findings.filter((f) => f.rule === 'phase-margin-at-gain').map((f) => where(f))).toEqual([r.at('gain')]);
  });
});

describe('settling of a large step: the integrator loop with a tanh pair', () => {
  it('matches τ·ln(sinh(x0)/sinh(x_b)) and says how long it slewed', () => {
    const gm = 1e-3;
    const i = 20e-6;
    const C = 100e-15 + 5e-12;
    const beta = 0.5;
    const stepIn = 0.5; // an input step of 0.5 V: 1 V at the output
    const band = 1e-3;
    const tau = C / (beta * gm);
    const x0 = (gm * stepIn) / i;
    const xb = (gm * band * stepIn) / i;
    const expected = tau * Math.log(Math.sinh(x0) / Math.sinh(xb));
    // rout = 50 GΩ stands for the integrator: β·A0 = 2.5·10⁷ leaves 4·10⁻⁸ of the final value.
    const r = ota(['  cl: 5 pF', '  gain: +2', '  step: {input: 500 mV}'], ['  settling_time: {max: 100 ns}'], { params: ['  i_tail: 20 µA'], rout: '50 GΩ' });
    const f = r.of('settling-time');
    expect(f).toHaveLength(1);
    // Within the integration tolerance and the 3·10⁻⁵ of the tanh that the linear tail leaves out.
    expect(f[0].computed! / expected).toBeCloseTo(1, 3);
    expect(f[0].message).toMatch(/slewing until [\d.]+ ns/);
    expect(f[0].derivation?.method).toBe('transient');
  });
});

describe('a pole-zero doublet below the crossover: the slow tail the phase margin does not show', () => {
  // One-stage OTA with a mirror node: A = A0·(1 + s/(2·pm))/((1 + s/pm)(1 + s/p1)),
  // pm = gm_mirror/c_mirror (B. Razavi, ch. 6, the mirror's doublet). With p1 → 0
  // and β = 1 the closed loop's denominator is s²/pm + s·(1 + ωu/z) + ωu,
  // ωu = gm/(cout + cl), z = 2·pm: its small root is the doublet's slow pole.
  it('names the doublet, its time constant, and the settling it sets', () => {
    const pm = 10e-6 / 1e-12;
    const wu = 1e-3 / 2.1e-12;
    const z = 2 * pm;
    const b = pm * (1 + wu / z);
    const c = pm * wu;
    const slow = (b - Math.sqrt(b * b - 4 * c)) / 2;
    const r = ota(['  cl: 2 pF', '  gain: +1'], ['  settling_time: {max: 40 ns, band: 0.01 %}'], { params: ['  gm_mirror: 10 µS', '  c_mirror: 1 pF'] });
    expect(r.model.loop.phaseMargin.value!).toBeGreaterThan(85);
    const f = r.of('settling-time');
    expect(f).toHaveLength(1);
    const tau = /τ = ([\d.]+) ns/.exec(f[0].message);
    expect(tau, f[0].message).not.toBeNull();
    expect(Number(tau![1]) * 1e-9 * slow).toBeCloseTo(1, 2);
    expect(f[0].message).toContain('pole-zero doublet');
    // The second-order rule from the phase margin misses it by a factor of eight.
    const m = checkText('t.md', r.text).points!.find((p) => p.claims.some((x) => x.key === 'settling_time'))!.context.model;
    expect(m.exact.settling_time.value! / m.hand.settling_time.value!).toBeGreaterThan(5);
    expect(m.caveats.some((x) => x.includes('pole-zero doublet'))).toBe(true);
  });

  it('warns about the phase margin at a gain once, not again at a settling band of the same loop', () => {
    const r = ota(['  cl: 2 pF', '  gain: +1'], ['  settling_time: {max: 1 µs, band: 0.01 %}', '  overshoot: {max: 50 %}'], { params: ['  gm_cas: 1 mS', '  c_cas: 3 pF'] });
    expect(r.of('phase-margin-at-gain').map(where)).toEqual([r.at('gain')]);
  });
});
