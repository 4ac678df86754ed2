// The whole check under random damage, with fast-check: mutated demo specs
// (byte flips, line deletions, duplications and swaps, insertions of YAML and
// Markdown punctuation, unit swaps, number changes, truncation, line ends,
// BOM) and random specs of every topology never make checkText throw, and
// always come back with well-formed findings (test/fuzz/support.ts:
// findingProblems): a non-empty rule id, a severity of error/warning/info, a
// line within the document (≤ lines + 1) and a column within its line, a
// non-empty message without NaN, undefined or [object Object], suggestions
// that are strings.
//
// Bounded for the normal suite (a few hundred runs each); bench/fuzz.mjs runs
// the same generators over 100,000 documents.
//
// The quantity parser on arbitrary strings is test/quantity/property.test.ts.

import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { checkText } from '../../src/check';
import { applyEdits, planFixes } from '../../src/fixes/restate';
import { DEMO_SPECS, type Mutation, NUMBER_POOL, PUNCTUATION, UNITS_POOL, applyMutation, findingProblems, randomSpec, reportProblems, rng } from './support';

const big = fc.nat({ max: 1 << 20 });
const mutation: fc.Arbitrary<Mutation> = fc.oneof(
  fc.record({ at: big, bit: fc.integer({ min: 0, max: 15 }) }).map((m): Mutation => ({ op: 'flip', ...m })),
  big.map((line): Mutation => ({ op: 'delete-line', line })),
  big.map((line): Mutation => ({ op: 'duplicate-line', line })),
  fc.record({ a: big, b: big }).map((m): Mutation => ({ op: 'swap-lines', ...m })),
  fc.record({ at: big, text: fc.constantFrom(...PUNCTUATION) }).map((m): Mutation => ({ op: 'insert', ...m })),
  fc.record({ at: big, text: fc.string({ maxLength: 8, unit: 'grapheme' }) }).map((m): Mutation => ({ op: 'insert', ...m })),
  fc.record({ at: big, length: fc.integer({ min: 0, max: 39 }) }).map((m): Mutation => ({ op: 'delete-span', ...m })),
  fc.record({ nth: big, unit: fc.constantFrom(...UNITS_POOL) }).map((m): Mutation => ({ op: 'unit-swap', ...m })),
  fc.record({ nth: big, text: fc.constantFrom(...NUMBER_POOL) }).map((m): Mutation => ({ op: 'number', ...m })),
  fc.constantFrom('crlf', 'cr', 'mixed').map((style): Mutation => ({ op: 'line-ends', style: style as 'crlf' | 'cr' | 'mixed' })),
  fc.constant<Mutation>({ op: 'bom' }),
  big.map((at): Mutation => ({ op: 'truncate', at })),
);
const demo = fc.constantFrom(...DEMO_SPECS);
const mutated = fc.tuple(demo, fc.array(mutation, { minLength: 1, maxLength: 4 })).map(([d, ms]) => ({ name: d.name, mutations: ms, text: ms.reduce(applyMutation, d.text) }));

// Inputs that once failed, replayed before the random ones (fast-check `examples`) so that
// these failures show on every run: a value of 1e-18 µS (an exception from the engine), and a
// plain scalar folded over two lines (a finding placed past the end of its line).
const demoText = (name: string) => DEMO_SPECS.find((d) => d.name === name)!.text;
const replay = (name: string, mutations: Mutation[]) => ({ name, mutations, text: mutations.reduce(applyMutation, demoText(name)) });
const KNOWN: Array<[{ name: string; mutations: Mutation[]; text: string }]> = [
  [replay('ref-buffer.md', [{ op: 'number', nth: 499152, text: '1e-18' }])],
  [replay('thermo-amp.md', [{ op: 'delete-span', at: 679265, length: 2 }, { op: 'number', nth: 2, text: '0' }])],
];

/** Runs the check; a throw fails the property with the input in the report. */
function checked(text: string) {
  const r = checkText('fuzz.md', text);
  const problems = findingProblems(r, text);
  expect(problems, JSON.stringify(text)).toEqual([]);
  return r;
}

describe('mutated demo specs', () => {
  it('never throw and always give well-formed findings', () => {
    fc.assert(
      fc.property(mutated, ({ text }) => {
        checked(text);
      }),
      { numRuns: 400, examples: KNOWN },
    );
  });

  it('render in the text, JSON and reviewer reports without NaN, Infinity or undefined', () => {
    fc.assert(
      fc.property(mutated, ({ text }) => {
        const r = checked(text);
        expect(reportProblems(r, text)).toEqual([]);
      }),
      { numRuns: 100 },
    );
  });

  it('give the same findings twice (no state leaks from one check into the next)', () => {
    fc.assert(
      fc.property(mutated, ({ text }) => {
        const a = checked(text);
        const b = checked(text);
        expect(b.findings).toEqual(a.findings);
      }),
      { numRuns: 100 },
    );
  });
});

describe('line ends and a BOM change nothing but bytes', () => {
  // Documents free of CR, BOM and other line separators, so that LF → CRLF / CR is a pure re-encoding.
  const lfOnly = mutated.filter(({ text }) => !/[\r\uFEFF\u0085\u2028\u2029]/.test(text));
  const key = (text: string) => checked(text).findings.map((f) => [f.rule, f.severity, f.line, f.column, f.message, f.suggestions]);

  it('CRLF, CR-only and a BOM give the findings of the LF document, at the same places', () => {
    fc.assert(
      fc.property(lfOnly, ({ text }) => {
        const lf = key(text);
        expect(key(text.replace(/\n/g, '\r\n'))).toEqual(lf);
        expect(key(text.replace(/\n/g, '\r'))).toEqual(lf);
        expect(key(`\uFEFF${text}`)).toEqual(lf);
      }),
      { numRuns: 60 },
    );
  });
});

describe('--restate on damaged documents loses no data', () => {
  // Every byte outside the edited spans is kept, spans never cross a line end,
  // and the fixed document is checked again without an exception.
  const variants = fc.tuple(mutated, fc.constantFrom('as is', 'crlf', 'bom+crlf', 'cr'));
  it('edits only the claim values it names', () => {
    fc.assert(
      fc.property(variants, ([{ text }, variant]) => {
        const raw = variant === 'as is' ? text : variant === 'crlf' ? text.replace(/\r?\n/g, '\r\n') : variant === 'cr' ? text.replace(/\r?\n/g, '\r') : `\uFEFF${text.replace(/\r?\n/g, '\r\n')}`;
        const r = checked(raw);
        if (!r.spec) return;
        const shift = raw.charCodeAt(0) === 0xfeff ? 1 : 0;
        const edits = planFixes(r, shift ? raw.slice(1) : raw, { bounds: true });
        const fixed = applyEdits(raw, edits, shift);
        let at = 0;
        let out = 0;
        for (const e of edits) {
          const keep = e.start + shift - at;
          expect(fixed.slice(out, out + keep)).toBe(raw.slice(at, e.start + shift));
          expect(raw.slice(e.start + shift, e.end + shift)).not.toMatch(/[\r\n]/);
          expect(e.text).not.toMatch(/[\r\n]/);
          out += keep + e.text.length;
          at = e.end + shift;
        }
        expect(fixed.slice(out)).toBe(raw.slice(at));
        checked(fixed);
      }),
      { numRuns: 100 },
    );
  });
});

describe('random specs of every topology (plausible values)', () => {
  const topologies = ['two-stage-miller', 'single-stage', 'common-source', 'three-stage-nested-miller', 'network'];
  // Seeds that once failed: a single-stage OTA with `cout: 0` and no load, a three-stage amplifier with no load
  // (hand estimates of Infinity, shown as "Infinity %" in the reviewer report).
  const known: Record<string, number[]> = { 'single-stage': [2094394921], 'three-stage-nested-miller': [-11] };
  it.each(topologies)('%s: never throw, well-formed findings and reports', (topology) => {
    fc.assert(
      fc.property(fc.integer(), (seed) => {
        const text = randomSpec(rng(seed), { topology, wide: false });
        const r = checked(text);
        expect(r.skipped).toBe(false);
        expect(reportProblems(r, text)).toEqual([]);
      }),
      { numRuns: 40, examples: (known[topology] ?? []).map((s) => [s] as [number]) },
    );
  });

  it('and with 1 to 3 mutations on top', () => {
    fc.assert(
      fc.property(fc.integer(), fc.array(mutation, { minLength: 1, maxLength: 3 }), (seed, ms) => {
        checked(ms.reduce(applyMutation, randomSpec(rng(seed), { wide: false })));
      }),
      { numRuns: 120 },
    );
  });
});
