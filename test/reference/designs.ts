// Random small-signal designs of a two-stage Miller-compensated CMOS op-amp,
// used as inputs for the ngspice reference fixtures. Deterministic (seeded)
// so the fixture file can be regenerated bit-for-bit.

/** Small-signal parameters, all SI units (S, Ω, F). Optional fields absent = element not present. */
export interface TwoStageDesign {
  id: string;
  gm1: number;
  r1: number;
  c1: number;
  gm2: number;
  r2: number;
  c2: number;
  cc: number;
  rz?: number;
  cl: number;
  rl?: number;
  beta: number;
}

/** mulberry32: tiny 32-bit seeded PRNG, good enough for test-vector generation. Returns values in [0, 1). */
export function mulberry32(seed: number): () => number {
  let a = seed >>> 0;
  return () => {
    a = (a + 0x6d2b79f5) >>> 0;
    let t = a;
    t = Math.imul(t ^ (t >>> 15), t | 1);
    t ^= t + Math.imul(t ^ (t >>> 7), t | 61);
    return ((t ^ (t >>> 14)) >>> 0) / 4294967296;
  };
}

/** Log-uniform draw in [lo, hi]: component values spread over decades, not linearly. */
function logUniform(rand: () => number, lo: number, hi: number): number {
  return lo * Math.pow(hi / lo, rand());
}

/**
 * `count` random designs from `seed`. Ranges (log-uniform):
 * gm1 20µS–2mS, r1 100k–20MΩ, c1 10f–500fF, gm2 200µS–20mS, r2 10k–2MΩ, c2 20f–1pF,
 * cc 0.2p–10pF, cl 0 (20 %) or 50f–20pF, rl absent (50 %) or 1k–1MΩ,
 * rz absent (1/3) or k/gm2 with k in 0.2–3 (RHP zero for k<1, none at k=1, LHP for k>1),
 * beta 1 (50 %) or 0.05–1.
 * At least one design (if any has rz) gets rz exactly 1/gm2, the zero-at-infinity edge case.
 */
export function randomTwoStageDesigns(seed: number, count: number): TwoStageDesign[] {
  const rand = mulberry32(seed);
  const out: TwoStageDesign[] = [];
  for (let i = 0; i < count; i++) {
    // Draw every random number unconditionally so that each field's stream
    // position does not depend on the branches taken by the others.
    const gm1 = logUniform(rand, 20e-6, 2e-3);
    const r1 = logUniform(rand, 100e3, 20e6);
    const c1 = logUniform(rand, 10e-15, 500e-15);
    const gm2 = logUniform(rand, 200e-6, 20e-3);
    const r2 = logUniform(rand, 10e3, 2e6);
    const c2 = logUniform(rand, 20e-15, 1e-12);
    const cc = logUniform(rand, 0.2e-12, 10e-12);
    const clZero = rand() < 0.2;
    const clVal = logUniform(rand, 50e-15, 20e-12);
    const rlAbsent = rand() < 0.5;
    const rlVal = logUniform(rand, 1e3, 1e6);
    const rzAbsent = rand() < 1 / 3;
    const rzK = logUniform(rand, 0.2, 3);
    const betaOne = rand() < 0.5;
    const betaVal = logUniform(rand, 0.05, 1);

    const d: TwoStageDesign = {
      id: `rnd-${seed}-${String(i).padStart(3, '0')}`,
      gm1,
      r1,
      c1,
      gm2,
      r2,
      c2,
      cc,
      cl: clZero ? 0 : clVal,
      beta: betaOne ? 1 : betaVal,
    };
    if (!rzAbsent) d.rz = rzK / gm2;
    if (!rlAbsent) d.rl = rlVal;
    out.push(d);
  }
  // Guarantee the exact-cancellation case is exercised: zero pushed to infinity.
  if (!out.some((d) => d.rz !== undefined && d.rz === 1 / d.gm2)) {
    const withRz = out.find((d) => d.rz !== undefined);
    if (withRz) withRz.rz = 1 / withRz.gm2;
  }
  return out;
}
