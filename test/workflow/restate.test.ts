// Restating never does harm: the edits --restate writes are the restatements the
// claim rules decided, so a rule that is off or a waived finding yields none; a
// figure resting on a likely prefix slip is not restated; a table row is never
// given a Min above its Typ.
import { describe, expect, it } from 'vitest';
import { checkText } from '../../src/check';
import { applyEdits, planFixes } from '../../src/fixes/restate';

const spec = (extra: { params?: string; claims?: string; waivers?: string } = {}) => `---
polecheck: 1
block: strand-restate-test
topology: two-stage-miller
params:
  gm1: 180 µS
  r1: 2.2 MΩ
  c1: 45 fF
  gm2: 1.6 mS
  r2: 150 kΩ
  c2: 120 fF
${extra.params ?? '  cc: 1.2 pF'}
conditions:
  cl: 2 pF
  beta: 1
claims:
${extra.claims ?? '  gbw: 40 MHz'}
${extra.waivers ?? ''}---
`;

const edits = (text: string, options = {}) => planFixes(checkText('t.md', text, options), text, { bounds: true });

describe('restating', () => {
  it('rewrites a stale typical claim in the author\'s unit, and nothing else', () => {
    const text = spec();
    const e = edits(text);
    expect(e).toHaveLength(1);
    const out = applyEdits(text, e, 0);
    expect(out).toMatch(/ {2}gbw: 2\d MHz\n/);
    expect(out.replace(/gbw: [^\n]+/, '')).toBe(text.replace(/gbw: [^\n]+/, ''));
    expect(checkText('t.md', out).findings.filter((f) => f.rule === 'gain-bandwidth' && f.severity === 'error')).toEqual([]);
  });

  it('writes nothing for a rule that is off', () => {
    expect(edits(spec(), { rules: { 'gain-bandwidth': { level: 'none' } } })).toEqual([]);
  });

  it('writes nothing for a waived finding', () => {
    const text = spec({ waivers: 'waivers:\n  - rule: gain-bandwidth\n    reason: accepted at the design review\n' });
    expect(checkText('t.md', text).findings.find((f) => f.rule === 'gain-bandwidth')?.waived).toBeDefined();
    expect(edits(text)).toEqual([]);
  });

  it('does not restate a figure that rests on a likely prefix slip, and says why', () => {
    // cc: 1.2 mF is a thousand million times the plausible range: probably pF.
    const text = spec({ params: '  cc: 1.2 mF' });
    const r = checkText('t.md', text);
    expect(r.findings.some((f) => f.rule === 'prefix-slip')).toBe(true);
    const gbw = r.findings.find((f) => f.rule === 'gain-bandwidth')!;
    const restate = gbw.fixes?.find((f) => f.kind === 'restate');
    expect(restate && restate.kind === 'restate' && restate.edit).toBeNull();
    expect(restate && restate.kind === 'restate' && restate.refused).toMatch(/prefix slip/);
    expect(gbw.suggestions.join(' ')).toMatch(/not restated: cc looks like a prefix slip/);
    expect(edits(text)).toEqual([]);
  });

  it('never writes a Min above the row\'s Typ', () => {
    // The model gives 23.4 MHz: Typ 22 holds within ±10 %, Min 24 fails; restating
    // Min to 23.4 would put it above the Typ of 22, so it is withheld and said.
    const text = `${spec({ claims: '  dc_gain: 99 dB' })}
| Parameter | Symbol | Conditions | Min | Typ | Max | Unit |
| --- | --- | --- | --- | --- | --- | --- |
| Unity-gain bandwidth | gbw | | 24 | 22 | | MHz |
`;
    const r = checkText('t.md', text);
    const min = r.findings.find((f) => f.rule === 'gain-bandwidth' && f.verdict?.bound === 'min')!;
    expect(min.verdict!.outcome).toBe('fails');
    const restate = min.fixes!.find((f) => f.kind === 'restate')!;
    expect(restate.kind === 'restate' && restate.edit).toBeNull();
    expect(restate.kind === 'restate' && restate.refused).toMatch(/contradict the other statements/);
    expect(planFixes(r, text, { bounds: true })).toEqual([]);
  });
});
