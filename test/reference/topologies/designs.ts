// Seeded random small-signal designs of the single-stage OTA, the common-source
// stage and the three-stage nested-Miller amplifier: the inputs of the ngspice
// reference fixture test/fixtures/ngspice-topologies.json. Deterministic, so the
// fixture regenerates bit-for-bit. All values SI (S, Ω, F); an optional field
// that is absent means the element is not there.

import { mulberry32 } from '../designs';

export interface SingleStageDesign {
  id: string;
  gm: number;
  rout: number;
  cout: number;
  /** Cascode (folding) node: both or neither. */
  gm_cas?: number;
  c_cas?: number;
  /** Current-mirror node: both or neither. */
  gm_mirror?: number;
  c_mirror?: number;
  /** Tail current: large-signal only, must not change any small-signal figure. */
  i_tail?: number;
  cl: number;
  rl?: number;
  beta: number;
}

export interface CommonSourceDesign {
  id: string;
  gm: number;
  rout: number;
  cgs: number;
  cgd: number;
  cdb: number;
  /** Source resistance; 0 = the source drives the gate directly. */
  rs: number;
  cl: number;
  rl?: number;
}

export interface ThreeStageDesign {
  id: string;
  gm1: number;
  r1: number;
  c1: number;
  gm2: number;
  r2: number;
  c2: number;
  gm3: number;
  r3: number;
  c3: number;
  cc1: number;
  cc2: number;
  cl: number;
  rl?: number;
  beta: number;
}

export type TopologyId = 'single-stage' | 'common-source' | 'three-stage-nested-miller';

/** Log-uniform draw in [lo, hi]. */
function logUniform(rand: () => number, lo: number, hi: number): number {
  return lo * Math.pow(hi / lo, rand());
}

const pad = (i: number) => String(i).padStart(3, '0');

/**
 * Single-stage OTA designs. Ranges (log-uniform): gm 20µS–5mS, rout 100k–50MΩ,
 * cout 10f–500fF, gm_cas 100µS–10mS, c_cas 10f–500fF, gm_mirror 50µS–5mS,
 * c_mirror 20f–1pF, i_tail 1µ–1mA (half of the designs), cl 0 (20 %) or
 * 100f–20pF, rl absent (50 %) or 10k–10MΩ, beta 1 (50 %) or 0.05–1.
 * Design i has the cascode iff bit 0 of i is set and the mirror iff bit 1 is:
 * every block of four covers all four combinations.
 */
export function randomSingleStageDesigns(seed: number, count: number): SingleStageDesign[] {
  const rand = mulberry32(seed);
  const out: SingleStageDesign[] = [];
  for (let i = 0; i < count; i++) {
    // Every number drawn unconditionally: a field's stream position never depends on branches.
    const gm = logUniform(rand, 20e-6, 5e-3);
    const rout = logUniform(rand, 100e3, 50e6);
    const cout = logUniform(rand, 10e-15, 500e-15);
    const gmCas = logUniform(rand, 100e-6, 10e-3);
    const cCas = logUniform(rand, 10e-15, 500e-15);
    const gmMirror = logUniform(rand, 50e-6, 5e-3);
    const cMirror = logUniform(rand, 20e-15, 1e-12);
    const tailAbsent = rand() < 0.5;
    const iTail = logUniform(rand, 1e-6, 1e-3);
    const clZero = rand() < 0.2;
    const clVal = logUniform(rand, 100e-15, 20e-12);
    const rlAbsent = rand() < 0.5;
    const rlVal = logUniform(rand, 10e3, 10e6);
    const betaOne = rand() < 0.5;
    const betaVal = logUniform(rand, 0.05, 1);
    const d: SingleStageDesign = { id: `ss-${seed}-${pad(i)}`, gm, rout, cout, cl: clZero ? 0 : clVal, beta: betaOne ? 1 : betaVal };
    if (i & 1) Object.assign(d, { gm_cas: gmCas, c_cas: cCas });
    if (i & 2) Object.assign(d, { gm_mirror: gmMirror, c_mirror: cMirror });
    if (!tailAbsent) d.i_tail = iTail;
    if (!rlAbsent) d.rl = rlVal;
    out.push(d);
  }
  return out;
}

/**
 * Common-source designs. Ranges (log-uniform): gm 100µS–20mS, rout 5k–1MΩ,
 * cgs 10f–1pF, cgd 1f–200fF, cdb 5f–500fF, rs 0 (1/3) or 50Ω–100kΩ,
 * cl 0 (20 %) or 50f–10pF, rl absent (50 %) or 1k–1MΩ.
 */
export function randomCommonSourceDesigns(seed: number, count: number): CommonSourceDesign[] {
  const rand = mulberry32(seed);
  const out: CommonSourceDesign[] = [];
  for (let i = 0; i < count; i++) {
    const gm = logUniform(rand, 100e-6, 20e-3);
    const rout = logUniform(rand, 5e3, 1e6);
    const cgs = logUniform(rand, 10e-15, 1e-12);
    const cgd = logUniform(rand, 1e-15, 200e-15);
    const cdb = logUniform(rand, 5e-15, 500e-15);
    const rsZero = rand() < 1 / 3;
    const rsVal = logUniform(rand, 50, 100e3);
    const clZero = rand() < 0.2;
    const clVal = logUniform(rand, 50e-15, 10e-12);
    const rlAbsent = rand() < 0.5;
    const rlVal = logUniform(rand, 1e3, 1e6);
    const d: CommonSourceDesign = { id: `cs-${seed}-${pad(i)}`, gm, rout, cgs, cgd, cdb, rs: rsZero ? 0 : rsVal, cl: clZero ? 0 : clVal };
    if (!rlAbsent) d.rl = rlVal;
    out.push(d);
  }
  return out;
}

/**
 * Three-stage nested-Miller designs. Ranges (log-uniform): gm1 20µS–1mS,
 * r1 100k–5MΩ, c1 10f–200fF, gm2 50µS–2mS, r2 50k–5MΩ, c2 10f–200fF,
 * gm3 0.5m–20mS, r3 10k–500kΩ, c3 50f–1pF, rl absent (50 %) or 5k–1MΩ,
 * beta 1 (50 %) or 0.05–1.
 * Every third design (i % 3 == 0) is sized near the Butterworth rule
 * cc1 = 4·(gm1/gm3)·cl, cc2 = 2·(gm2/gm3)·cl, each scaled by 0.8–1.25, with
 * cl 5p–100pF and gm3 ≥ 4·gm2, 8·gm1 (so the rule applies); the others draw
 * cc1 0.5p–20pF, cc2 0.1p–10pF, cl 0 (20 %) or 100f–100pF at random.
 */
export function randomThreeStageDesigns(seed: number, count: number): ThreeStageDesign[] {
  const rand = mulberry32(seed);
  const out: ThreeStageDesign[] = [];
  for (let i = 0; i < count; i++) {
    const gm1 = logUniform(rand, 20e-6, 1e-3);
    const r1 = logUniform(rand, 100e3, 5e6);
    const c1 = logUniform(rand, 10e-15, 200e-15);
    const gm2 = logUniform(rand, 50e-6, 2e-3);
    const r2 = logUniform(rand, 50e3, 5e6);
    const c2 = logUniform(rand, 10e-15, 200e-15);
    let gm3 = logUniform(rand, 0.5e-3, 20e-3);
    const r3 = logUniform(rand, 10e3, 500e3);
    const c3 = logUniform(rand, 50e-15, 1e-12);
    let cc1 = logUniform(rand, 0.5e-12, 20e-12);
    let cc2 = logUniform(rand, 0.1e-12, 10e-12);
    const clZero = rand() < 0.2;
    let cl = clZero ? 0 : logUniform(rand, 100e-15, 100e-12);
    const rlAbsent = rand() < 0.5;
    const rlVal = logUniform(rand, 5e3, 1e6);
    const betaOne = rand() < 0.5;
    const betaVal = logUniform(rand, 0.05, 1);
    const bwCl = logUniform(rand, 5e-12, 100e-12);
    const k1 = logUniform(rand, 0.8, 1.25);
    const k2 = logUniform(rand, 0.8, 1.25);
    const butterworth = i % 3 === 0;
    if (butterworth) {
      cl = bwCl;
      gm3 = Math.max(gm3, 4 * gm2, 8 * gm1);
      cc1 = k1 * 4 * (gm1 / gm3) * cl;
      cc2 = k2 * 2 * (gm2 / gm3) * cl;
    }
    const d: ThreeStageDesign = {
      id: `nmc-${seed}-${pad(i)}${butterworth ? '-bw' : ''}`,
      gm1, r1, c1, gm2, r2, c2, gm3, r3, c3, cc1, cc2,
      cl,
      beta: betaOne ? 1 : betaVal,
    };
    if (!rlAbsent) d.rl = rlVal;
    out.push(d);
  }
  return out;
}
