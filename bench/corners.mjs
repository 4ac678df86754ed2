// Worst-case search over ranges (`node --import tsx bench/corners.mjs`, part
// of `npm run bench`): one spec with 12 ranged params and conditions and three
// bound claims, checked in-process after a warm-up. Prints figures; asserts nothing.
import { checkText } from '../src/check.ts';

const SPEC = `---
polecheck: 1
block: strand-corner-bench
topology: two-stage-miller
params:
  gm1: 240 µS ±15%
  r1: 3.3 MΩ ±20%
  c1: 60 fF ±10%
  gm2: 2.4 mS ±15%
  r2: 120 kΩ ±20%
  c2: 150 fF ±10%
  cc: 1.5 pF ±10%
  rz: 300 Ω ±20%
  i1: 24 µA ±10%
  i2: 200 µA ±10%
conditions:
  cl: 3 pF ±30%
  rl: 20 kΩ ±20%
claims:
  gbw: {min: 15 MHz, max: 40 MHz}
  phase_margin: {min: 60 deg}
  slew_rate: {min: 10 V/µs}
---
`;

for (let i = 0; i < 5; i++) checkText('bench.md', SPEC);
const times = [];
let findings = 0;
for (let i = 0; i < 30; i++) {
  const t0 = performance.now();
  findings = checkText('bench.md', SPEC).findings.length;
  times.push(performance.now() - t0);
}
times.sort((a, b) => a - b);
console.log('worst case over ranges: 12 ranged keys, 3 bound claims (4 bounds)');
console.log(`  median ${times[15].toFixed(1)} ms per check, best ${times[0].toFixed(1)} ms, worst ${times[29].toFixed(1)} ms (30 runs; ${findings} findings)`);
