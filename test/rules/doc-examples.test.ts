// The examples of every rule page run as tests, so the docs cannot drift: a
// failing example must draw at least one finding of its rule, a passing one
// none of its rule and no error of any rule.
import { readdirSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import { checkText } from '../../src/check';
import { readRulePage } from './support/docs';

const pages = readdirSync('rules').filter((f) => f.endsWith('.md')).sort();

describe('rule page examples', () => {
  it('finds the rule pages', () => {
    expect(pages.length).toBeGreaterThanOrEqual(12);
  });

  for (const file of pages) {
    const id = file.replace(/\.md$/, '');
    const page = readRulePage(`rules/${file}`);
    describe(id, () => {
      it('has well-formed example blocks only', () => {
        expect(page.malformed).toEqual([]);
        expect(page.examples.map((e) => e.kind).sort()).toEqual(expect.arrayContaining(['failing', 'passing']));
      });
      for (const ex of page.examples) {
        it(`${ex.kind} example at line ${ex.line}`, () => {
          const r = checkText(`rules/${file}#L${ex.line}`, ex.text);
          expect(r.skipped, 'the example must be a spec').toBe(false);
          const mine = r.findings.filter((f) => f.rule === id);
          const show = (fs: typeof r.findings) => fs.map((f) => `${f.line}:${f.column} ${f.severity} ${f.rule}: ${f.message}`);
          if (ex.kind === 'failing') {
            expect(mine.length, `no ${id} finding; got ${JSON.stringify(show(r.findings))}`).toBeGreaterThan(0);
          } else {
            expect(show(mine)).toEqual([]);
            expect(show(r.findings.filter((f) => f.severity === 'error'))).toEqual([]);
          }
        });
      }
    });
  }
});
