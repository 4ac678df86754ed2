// The curves the review page draws, against ngspice run live on the same
// networks: the open-loop AC sweep of A(jω), the closed loop's AC sweep, and
// its transient step response. Two demo blocks (two-stage Miller at β = 1,
// and at β = 0.5 with a resistive load). Bars: 0.01 dB and 0.1° over the
// sweep, 0.2 % of the final value over the step (the ngspice step has a ramp
// of 10⁻⁵ of the span, and a transient integration's own error).

import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { checkText } from '../../../src/check';
import { pageData } from '../../../src/report/html/page-data';
import { runDeck } from '../../reference/closed-loop/ngspice';
import { elementsOf } from '../../reference/failing-specs';
import { spiceNum as n } from '../../reference/netlist';

const BLOCKS = ['specs/strand/vcm-buffer.md', 'specs/strand/adc-driver.md'];

/** Rows of `print` after its header: index, then the columns. */
function printed(stdout: string): number[][] {
  return stdout
    .split(/\r?\n/)
    .filter((l) => /^\d+\t/.test(l))
    .map((l) => l.trim().split(/\s+/).slice(1).map(Number));
}

const wrap = (deg: number) => deg - 360 * Math.round(deg / 360);

describe.each(BLOCKS)('the curves of %s against ngspice', (path) => {
  const r = checkText(path, readFileSync(path, 'utf8'));
  const page = pageData(r)!;
  const v = r.model!.values;
  const beta = r.model!.beta;
  const { elements } = elementsOf('two-stage-miller', v, 'page');
  const b = page.bode!;
  // The grid is 24 points a decade from a power of ten, as ngspice's `ac dec 24` sweep; inserted crossover points are not on it.
  const from = b.open[0].f;
  const to = b.open[b.open.length - 1].f;
  const onGrid = (f: number) => Math.abs(Math.log10(f / from) * 24 - Math.round(Math.log10(f / from) * 24)) < 1e-6;

  it('A(jω): magnitude within 0.01 dB, phase within 0.1°', async () => {
    const deck = ['* open loop', ...elements, '.control', 'set width=400', 'option numdgt=12', `ac dec 24 ${n(from)} ${n(to)}`, 'print vdb(out) vp(out)', 'quit', '.endc', '.end', ''].join('\n');
    const rows = printed((await runDeck(deck)).stdout);
    const mine = b.open.filter((p) => onGrid(p.f));
    expect(rows.length).toBe(mine.length);
    for (const [i, p] of mine.entries()) {
      const [f, db, rad] = rows[i];
      expect(Math.abs(f / p.f - 1)).toBeLessThan(1e-9);
      expect(Math.abs(db - p.db)).toBeLessThan(0.01);
      expect(Math.abs(wrap((rad * 180) / Math.PI - p.deg))).toBeLessThan(0.1);
    }
    // The loop gain is the same curve shifted by 20·log10 β.
    for (const [i, p] of b.loop!.entries()) expect(p.db - b.open[i].db).toBeCloseTo(20 * Math.log10(beta), 9);
  });

  const closedDeck = (analysis: string[]) =>
    ['* closed loop', `vs src 0 dc 0 ac 1 pwl(0 0 ${n(stepEnd * 1e-5)} 1)`, `Efb in src out 0 ${n(-beta)}`, ...elements.filter((l) => !l.startsWith('vin ')), '.options reltol=1e-7 abstol=1e-18 vntol=1e-12', '.control', 'set width=400', 'option numdgt=12', ...analysis, 'quit', '.endc', '.end', ''].join('\n');
  const step = page.step!;
  const stepEnd = step.points[step.points.length - 1].t;

  it('the closed loop: magnitude within 0.01 dB', async () => {
    const rows = printed((await runDeck(closedDeck([`ac dec 24 ${n(from)} ${n(to)}`, 'print vdb(out)']))).stdout);
    const mine = b.closed!.filter((p) => onGrid(p.f));
    expect(rows.length).toBe(mine.length);
    for (const [i, p] of mine.entries()) expect(Math.abs(rows[i][1] - p.db)).toBeLessThan(0.01);
  });

  it('the step response: within 0.2 % of the final value at 11 times', async () => {
    // Every 20th sample (ngspice cannot measure at the last time point itself).
    const picks = step.points.filter((_, i) => i > 0 && i % 20 === 0 && i < step.points.length - 1);
    const meas = picks.map((p, i) => `meas tran y${i} FIND v(out) AT=${n(p.t)}`);
    const out = (await runDeck(closedDeck(['tf v(out) vs', 'print transfer_function', `tran ${n(stepEnd / 4000)} ${n(stepEnd)} 0 ${n(stepEnd / 4000)}`, ...meas]))).stdout;
    const final = Number(/^transfer_function\s*=\s*(\S+)/m.exec(out)![1]);
    for (const [i, p] of picks.entries()) {
      const m = new RegExp(`^y${i}\\s*=\\s*(\\S+)`, 'm').exec(out);
      if (!m) throw new Error(`no y${i} in\n${out.slice(-3000)}`);
      const y = Number(m[1]) / final;
      expect(Math.abs(y - p.y)).toBeLessThan(2e-3);
    }
  });
});
