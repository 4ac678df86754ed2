// Runs ngspice -b on the noise decks of ./netlist.ts and reads back the
// densities and their integrals. ngspice's `noise` analysis sums, at each
// frequency of the sweep, every noise generator's density times its squared
// transfer to the output (onoise_spectrum, V/√Hz), divides by the squared
// gain from the source (inoise_spectrum), and integrates both over the sweep
// (onoise_total, inoise_total, V rms), piecewise as a power law between points.
//
// The reference integrals are taken from the printed densities by that same
// power-law rule (powerLawRms), not from the totals: ngspice 39's inoise_total
// was found to exceed the power-law integral of its own inoise_spectrum by up
// to the sweep's step ratio where the gain falls (a flat input density over a
// falling output read 26 % high at 5 points a decade), and both totals come
// out as NaN for some sweeps. Where onoise_total is a number, the test checks
// that powerLawRms reproduces it.

import { parseScalars, runNetlist, section } from '../ngspice';
import { NOISE_MARK, noiseDeck } from './netlist';

export interface NoiseRun {
  f: number[];
  /** V/√Hz */
  onoise: number[];
  inoise: number[];
  /** V rms over the sweep as ngspice prints them (NaN when it prints nan). */
  onoiseTotal: number;
  inoiseTotal: number;
}

/** Rows "index  frequency  onoise  inoise" of the noise1 printout. */
export function parseNoiseSpectrum(lines: string[]): { f: number[]; onoise: number[]; inoise: number[] } {
  const f: number[] = [];
  const onoise: number[] = [];
  const inoise: number[] = [];
  for (const l of lines) {
    const cols = l.trim().split(/\s+/);
    if (cols.length !== 4 || !/^\d+$/.test(cols[0])) continue;
    const [x, o, i] = cols.slice(1).map(Number);
    if (![x, o, i].every(Number.isFinite)) throw new Error(`cannot parse ngspice noise row "${l}"`);
    f.push(x);
    onoise.push(o);
    inoise.push(i);
  }
  return { f, onoise, inoise };
}

/**
 * √(∫ e(f)² df) from samples, e² taken as a power law of f between
 * neighbours: ∫ N1·(f/f1)^a df over [f1, f2] with a = ln(N2/N1)/ln(f2/f1).
 */
export function powerLawRms(f: number[], density: number[]): number {
  let sum = 0;
  for (let i = 0; i + 1 < f.length; i++) {
    const [f1, f2] = [f[i], f[i + 1]];
    const [n1, n2] = [density[i] ** 2, density[i + 1] ** 2];
    if (n1 === 0 || n2 === 0) {
      sum += ((n1 + n2) / 2) * (f2 - f1);
      continue;
    }
    const r = Math.log(f2 / f1);
    const a = Math.log(n2 / n1) / r;
    sum += Math.abs(a + 1) < 1e-9 ? n1 * f1 * r : ((n1 * f1) / (a + 1)) * (Math.exp((a + 1) * r) - 1);
  }
  return Math.sqrt(sum);
}

export function runNoise(title: string, elements: string[], output: string, temperatureK: number, f1: number, f2: number, perDecade: number): NoiseRun {
  const { stdout, stderr } = runNetlist(noiseDeck(title, elements, output, temperatureK, f1, f2, perDecade));
  const spectrum = section(stdout, NOISE_MARK.spectrum);
  const total = section(stdout, NOISE_MARK.total);
  if (!spectrum.plot.startsWith('noise') || !total.plot.startsWith('noise')) throw new Error(`${title}: ngspice noise analysis failed\n${stderr}`);
  const s = parseNoiseSpectrum(spectrum.lines);
  const scalars = parseScalars(total.lines);
  const onoiseTotal = Number(scalars.get('onoise_total'));
  const inoiseTotal = Number(scalars.get('inoise_total'));
  const expect = Math.round(Math.log10(f2 / f1) * perDecade) + 1;
  if (Math.abs(s.f.length - expect) > 1 || !scalars.has('onoise_total')) {
    throw new Error(`${title}: expected ~${expect} noise points and the totals, parsed ${s.f.length}\n${stderr}`);
  }
  return { ...s, onoiseTotal, inoiseTotal };
}
