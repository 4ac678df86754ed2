// The design-change edits of the code actions against the spec the change
// was judged on (src/verdicts/points.ts withParams): the edited text, read again by
// the command's reader, holds the same param values — a ranged param keeps
// its spread around the new value, a `±` tolerance stays as written, a param
// not yet written gets its own line. Values are printed with 3 significant
// digits (as the design-change suggestions print them), hence the 0.5 % bar.

import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { designEdits, waiverEdit } from '../../src/lsp/actions';
import { readDocument } from '../../src/pipeline';
import { withParams } from '../../src/verdicts/points';
import type { Spec } from '../../src/spec/types';
import { ROOT, applyTextEdits } from './client';

const read = (text: string): Spec => {
  const r = readDocument('spec.md', text);
  if (r.kind !== 'spec' || !r.spec) throw new Error('not a spec');
  return r.spec;
};

describe('design-change edits', () => {
  const text = readFileSync(join(ROOT, 'specs', 'strand', 'bridge-preamp.md'), 'utf8');
  const spec = read(text);

  it.each([
    ['cc written as {min, typ, max}', { cc: 1.8e-12 }],
    ['gm1 written as 240 µS ±15%', { gm1: 310e-6 }],
    ['rz not written', { rz: 2.2e3 }],
    ['two params at once', { cc: 1.2e-12, gm2: 3.1e-3 }],
  ])('%s', (_, changes) => {
    const edits = designEdits(spec, text, text.split('\n'), changes)!;
    const edited = read(applyTextEdits(text, edits));
    const judged = withParams(spec, changes);
    for (const key of Object.keys(changes)) {
      const want = judged.params.get(key)!;
      const got = edited.params.get(key)!;
      for (const b of ['typ', 'min', 'max'] as const) {
        expect(Boolean(got[b])).toBe(Boolean(want[b]));
        if (want[b]) expect(got[b]!.quantity.value / want[b]!.quantity.value).toBeCloseTo(1, 2);
      }
      expect(Boolean(got.tolerance)).toBe(Boolean(spec.params.get(key)?.tolerance));
    }
    // Nothing else of the document changed.
    const untouched = [...spec.params.keys()].filter((k) => !(k in changes));
    for (const k of untouched) expect(edited.params.get(k)!.typ.quantity.written.text).toBe(spec.params.get(k)!.typ.quantity.written.text);
  });
});

describe('waiver skeleton', () => {
  const finding = { rule: 'phase-margin', severity: 'error' as const, line: 1, column: 1, claim: 'phase_margin', message: '', suggestions: [] };
  const base = '---\npolecheck: 1\nblock: b\n---\n\n# B\n';

  it.each([
    ['no waivers yet', base],
    ['an existing list', base.replace('block: b\n', 'block: b\nwaivers:\n  - rule: gain-bandwidth\n    reason: accepted\n')],
    ['an empty flow list', base.replace('block: b\n', 'block: b\nwaivers: []\n')],
  ])('%s: one more entry the reader reads, with an empty reason and an expiry 90 days out', (_, doc) => {
    const e = waiverEdit(doc, doc.split('\n'), finding, '2026-12-02')!;
    const out = applyTextEdits(doc, [e]);
    const fm = out.slice(4, out.indexOf('\n---', 4));
    expect(fm).toMatch(/- rule: phase-margin\n\s+claim: phase_margin\n\s+reason: ""[^\n]*\n\s+expires: 2027-03-02/);
    expect((fm.match(/- rule:/g) ?? []).length).toBe((doc.match(/- rule:/g) ?? []).length + 1);
  });
});
