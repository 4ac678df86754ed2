// The JSON report's structured fixes (SPEC-FORMAT §4): a restate edit by line and
// column whose text, put in place, is the restated claim; design changes with
// the figure each claim takes, stability and whether every claim holds.
import { describe, expect, it } from 'vitest';
import { checkText } from '../../src/check';
import { jsonReport } from '../../src/report/json';

const text = `---
polecheck: 1
block: strand-json-fixes
topology: two-stage-miller
params:
  gm1: 180 µS
  r1: 2.2 MΩ
  c1: 45 fF
  gm2: 1.6 mS
  r2: 150 kΩ
  c2: 120 fF
  cc: 1.2 pF
  i1: 20 µA
  i2: 150 µA
conditions:
  cl: 2 pF
  beta: 1
claims:
  gbw: 40 MHz
  phase_margin: {min: 60 deg}
---
`;

describe('JSON report fixes', () => {
  const report = JSON.parse(jsonReport([checkText('specs/t.md', text)]));
  const f = report.files[0].findings.find((x: { rule: string }) => x.rule === 'gain-bandwidth');

  it('carries the verdict and the fixes beside the suggestions', () => {
    expect(f.verdict).toMatchObject({ bound: 'typ', outcome: 'fails', stated: 40e6, stability: 'stable' });
    expect(f.fixes.length).toBe(f.suggestions.length);
  });

  it('gives a restate edit that, applied by line and column, restates the claim', () => {
    const restate = f.fixes.find((x: { kind: string }) => x.kind === 'restate');
    const { line, column, endLine, endColumn, text: replacement } = restate.edit;
    expect(endLine).toBe(line);
    const lines = text.split('\n');
    const l = lines[line - 1];
    lines[line - 1] = l.slice(0, column - 1) + replacement + l.slice(endColumn - 1);
    expect(lines[line - 1]).toMatch(/^ {2}gbw: 2\d(\.\d)? MHz$/);
    const again = checkText('t.md', lines.join('\n')).findings.filter((x) => x.rule === 'gain-bandwidth' && x.severity === 'error');
    expect(again).toEqual([]);
  });

  it('gives design changes with the figures of every claim and the verdict on all of them', () => {
    const designs = f.fixes.filter((x: { kind: string }) => x.kind === 'design');
    expect(designs.length).toBeGreaterThan(0);
    for (const d of designs) {
      expect(Object.keys(d.gives).sort()).toEqual(['gbw', 'phase_margin']);
      expect(typeof d.stable).toBe('boolean');
      expect(d.meetsAll).toBe(d.breaks.length === 0 && d.stable);
      // The changes are the values as printed in the text.
      for (const [k, v] of Object.entries(d.changes)) expect(d.text).toContain(`${k} = `), expect(Number.isFinite(v)).toBe(true);
    }
  });
});
