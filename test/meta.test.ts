// Every rule has a registry entry, a module named after its id, a page with
// the sections the contributor guide asks for and both examples, and a test
// under test/rules that names it.
import { existsSync, readFileSync, readdirSync, statSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { RULES } from '../rules';
import { type RulePage, readRulePage } from './rules/support/docs';

const SECTIONS = ['What it checks', 'Why it matters', 'How the figure is computed', 'Options', 'Failing example', 'Passing example'];

function testFiles(dir: string): string[] {
  return readdirSync(dir).flatMap((name) => {
    const p = join(dir, name);
    return statSync(p).isDirectory() ? testFiles(p) : p.endsWith('.test.ts') ? [p] : [];
  });
}

describe('rule registry', () => {
  const ids = RULES.map((r) => r.id);

  it('has unique ids in kebab case', () => {
    expect(new Set(ids).size).toBe(ids.length);
    for (const id of ids) expect(id).toMatch(/^[a-z][a-z0-9]*(-[a-z0-9]+)*$/);
  });

  it('registers every module of rules/ (index.ts aside)', () => {
    const modules = readdirSync('rules').filter((f) => f.endsWith('.ts') && f !== 'index.ts').map((f) => f.replace(/\.ts$/, '')).sort();
    expect([...ids].sort()).toEqual(modules);
  });

  it('imports each rule from the module named after its id', () => {
    const index = readFileSync('rules/index.ts', 'utf8');
    const imports = new Map([...index.matchAll(/^import (\w+) from '\.\/([\w-]+)';$/gm)].map((m) => [m[1], m[2]]));
    const order = [...index.matchAll(/^ {2}(\w+),$/gm)].map((m) => m[1]);
    expect(order.map((name) => imports.get(name))).toEqual(ids);
  });

  it('gives every rule a one-line description, a severity and option defaults', () => {
    for (const r of RULES) {
      expect(r.description, r.id).toMatch(/^\S.*\.$/);
      expect(r.description.includes('\n'), r.id).toBe(false);
      expect(['error', 'warning', 'note']).toContain(r.severity);
      for (const v of Object.values(r.options)) expect(Number.isFinite(v), r.id).toBe(true);
    }
  });
});

describe('rule pages', () => {
  const pages = readdirSync('rules').filter((f) => f.endsWith('.md')).map((f) => f.replace(/\.md$/, '')).sort();

  it('has no page without a rule', () => {
    const ids = new Set(RULES.map((r) => r.id));
    expect(pages.filter((p) => !ids.has(p))).toEqual([]);
  });

  for (const rule of RULES) {
    describe(rule.id, () => {
      const path = `rules/${rule.id}.md`;
      const exists = existsSync(path);
      const page: RulePage = exists ? readRulePage(path) : { sections: [], examples: [], malformed: [] };

      it('has a page rules/<id>.md', () => {
        expect(exists, `${path} is missing`).toBe(true);
      });

      it('is titled with the id and opens with a one-line summary', () => {
        expect(page.title).toBe(rule.id);
        expect(page.summary, 'summary paragraph').toBeDefined();
        expect(page.summary!.includes('\n'), 'the summary is one line').toBe(false);
      });

      it('has the sections in order', () => {
        expect(page.sections).toEqual(SECTIONS);
      });

      it('has a failing and a passing example, each failing one followed by what the tool reports', () => {
        const kinds = page.examples.map((e) => e.kind);
        expect(kinds).toContain('failing');
        expect(kinds).toContain('passing');
        for (const e of page.examples.filter((x) => x.kind === 'failing')) expect(e.after, `line ${e.line}`).toMatch(/\S/);
      });

      it('documents the option defaults it declares', () => {
        const text = exists ? readFileSync(path, 'utf8') : '';
        for (const [name, value] of Object.entries(rule.options)) expect(text).toContain(`\`${name}\` (default ${value})`);
      });

      it('is exercised by a test under test/rules', () => {
        const files = testFiles('test/rules').filter((f) => !f.endsWith('doc-examples.test.ts'));
        const naming = files.filter((f) => readFileSync(f, 'utf8').includes(`'${rule.id}'`));
        expect(naming, `no test in test/rules names '${rule.id}'`).not.toEqual([]);
      });
    });
  }
});
