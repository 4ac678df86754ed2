// The hostile documents of the second robustness campaign (issue 17), shared
// by the regression tests (test/fuzz/second-campaign.test.ts), the hostile
// bench (bench/hostile.mjs, which times each) and the fuzz campaign's families
// (bench/fuzz.mjs). Each builds its text on demand: some are large.

/** A clean single-stage spec (model GBW 849 MHz) to which a body or keys are added. */
export const HEAD = '---\npolecheck: 1\ntopology: single-stage\nparams:\n  gm: 800 µS\n  rout: 8 MΩ\n  cout: 150 fF\nclaims:\n  gbw: 849 MHz\n---\n\n';
export const TABLE = '| Parameter | Typ |\n|---|---|\n| GBW | 849 MHz |\n\n';

/** A two-stage Miller design (model GBW about 23 MHz) with `claims` as written. */
export function twoStage(claims: string, body = ''): string {
  return `---
polecheck: 1
block: strand-hostile
topology: two-stage-miller
params:
  gm1: 180 µS
  r1: 2.2 MΩ
  c1: 45 fF
  gm2: 1.6 mS
  r2: 150 kΩ
  c2: 120 fF
  cc: 1.2 pF
conditions:
  cl: 2 pF
  beta: 1
claims:
${claims}---
${body}`;
}

/**
 * A user-defined network of `n` nodes: an input transconductance, then an RC
 * ladder (series r, shunt r and c at every node) with a gain stage every
 * `every` nodes, so the loop has gain. `claims` as written.
 */
export function ladder(n: number, claims: string, every = 0): string {
  const nodes = Array.from({ length: n }, (_, i) => `n${i + 1}`);
  const el: string[] = [`    gin: {kind: transconductance, into: 0, from: n1, control: [in, 0], value: 100 µS}`];
  for (let i = 1; i <= n; i++) {
    el.push(`    rs${i}: {kind: resistor, between: [n${i}, 0], value: ${i === n ? '1 MΩ' : '10 MΩ'}}`);
    el.push(`    cs${i}: {kind: capacitor, between: [n${i}, 0], value: ${100 + 10 * i} fF}`);
    if (i < n) {
      if (every && i % every === 0) el.push(`    g${i}: {kind: transconductance, into: 0, from: n${i + 1}, control: [n${i}, 0], value: 1 mS}`);
      else el.push(`    r${i}: {kind: resistor, between: [n${i}, n${i + 1}], value: 10 kΩ}`);
    }
  }
  return `---
polecheck: 1
block: strand-ladder
topology: network
network:
  input: in
  output: n${n}
  nodes: [in, ${nodes.join(', ')}]
  elements:
${el.join('\n')}
conditions:
  cl: 1 pF
  beta: 1
claims:
${claims}---
`;
}

export interface Hostile {
  name: string;
  make: () => string;
}

export const HOSTILE: Hostile[] = [
  { name: '40,000 spaces then a table', make: () => `${HEAD}${' '.repeat(40000)}\n${TABLE}` },
  { name: '40,000 spaces in a delimiter-like line', make: () => `${HEAD}|${' '.repeat(40000)}-\n${TABLE}` },
  { name: 'a 0.5 MiB paragraph and a table', make: () => `${HEAD}${'word *emph* [link] '.repeat(27600)}\n\n${TABLE}` },
  { name: 'a line of 4,000 list markers and a table', make: () => `${HEAD}${'- '.repeat(4000)}x\n\n${TABLE}` },
  { name: '2,000 nested brackets in a table cell', make: () => `${HEAD}| Parameter | Typ |\n|---|---|\n| GBW ${'['.repeat(1900)} | 849 MHz |\n` },
  { name: '10,000 identical table rows', make: () => `${HEAD}| Parameter | Typ |\n|---|---|\n${'| GBW | 849 MHz |\n'.repeat(10000)}` },
  { name: '2,000 failing table rows (design changes)', make: () => twoStage('  gbw: 23 MHz\n', `\n| Parameter | Typ |\n|---|---|\n${'| GBW | 40 MHz |\n'.repeat(2000)}`) },
  { name: '100 table rows at distinct load conditions', make: () => twoStage('  gbw: 23 MHz\n', `\n| Parameter | Typ | Conditions |\n|---|---|---|\n${Array.from({ length: 100 }, (_, i) => `| GBW | 23 MHz | CL = ${i + 1} pF |\n`).join('')}`) },
  { name: '100,000 unknown keys', make: () => HEAD.replace('claims:', `${Array.from({ length: 100000 }, (_, i) => `k${i}: 1`).join('\n')}\nclaims:`) },
  { name: 'polecheck: 1 after 64 KiB of front matter', make: () => `---\n${'# padding comment line\n'.repeat(3000)}polecheck: 1\ntopology: single-stage\nparams:\n  gm: 800 µS\n  rout: 8 MΩ\n  cout: 150 fF\nclaims:\n  gbw: 849 MHz\n---\n` },
  { name: '20-node network, p1/p2/gain margin', make: () => ladder(20, '  p1: 10 Hz\n  p2: 1 MHz\n  gain_margin: {min: 10 dB}\n  gbw: 10 MHz\n', 5) },
  { name: '40-node network, p1/p2/gain margin', make: () => ladder(40, '  p1: 10 Hz\n  p2: 1 MHz\n  gain_margin: {min: 10 dB}\n  phase_margin: {min: 45 deg}\n', 10) },
  { name: '63-node network (the limit), p1/p2/gain margin', make: () => ladder(63, '  p1: 10 Hz\n  p2: 1 MHz\n  gain_margin: {min: 10 dB}\n', 16) },
  { name: '100-node network (above the limit)', make: () => ladder(100, '  p1: 10 Hz\n  p2: 1 MHz\n  gain_margin: {min: 10 dB}\n', 20) },
  { name: '12-node RC ladder (no finite zeros), p1 and rhp_zero', make: () => ladder(12, '  p1: 10 Hz\n  rhp_zero: 1 GHz\n') },
  { name: 'a block scalar per claim, CRLF', make: () => twoStage('  gbw: |\n    40 MHz\n  p1: >-\n    10\n    Hz\n').replace(/\n/g, '\r\n') },
];
