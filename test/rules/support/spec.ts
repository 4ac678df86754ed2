// Builds spec text from plain objects, so that rule tests state only what
// they are about, and finds where a written value sits in that text (1-based
// line and column, as SPEC-FORMAT §4 defines them) by searching the text
// itself, independently of the tool's YAML reader.

import { checkText, type CheckOptions } from '../../../src/check';
import type { Finding } from '../../../src/findings';

export interface SpecInput {
  block?: string;
  /** Raw YAML values, e.g. `{ gm1: '180 µS', cc: '{min: 1.1 pF, max: 1.3 pF}' }`. */
  params: Record<string, string>;
  conditions?: Record<string, string>;
  claims?: Record<string, string>;
  /** Markdown after the front matter. */
  body?: string;
}

type Section = 'params' | 'conditions' | 'claims';

export interface Built {
  text: string;
  /** Position of `needle` on the line of `key` in `section` (default: the whole value). */
  at(section: Section, key: string, needle?: string): { line: number; column: number };
  /** Position of the key itself. */
  keyAt(section: Section, key: string): { line: number; column: number };
  /** Position of a top-level key such as `params`. */
  topAt(key: string): { line: number; column: number };
}

export function buildSpec(input: SpecInput): Built {
  const lines: string[] = ['---', 'polecheck: 1'];
  if (input.block) lines.push(`block: ${input.block}`);
  lines.push('topology: two-stage-miller');
  const where = new Map<string, number>(); // "section.key" → 0-based line index
  const section = (name: Section, entries: Record<string, string> | undefined): void => {
    if (!entries) return;
    where.set(`top.${name}`, lines.length);
    lines.push(`${name}:`);
    for (const [k, v] of Object.entries(entries)) {
      where.set(`${name}.${k}`, lines.length);
      lines.push(`  ${k}: ${v}`);
    }
  };
  section('params', input.params);
  section('conditions', input.conditions);
  section('claims', input.claims);
  lines.push('---', '', input.body ?? 'Body text.', '');
  const text = lines.join('\n');
  const lineIndex = (id: string): number => {
    const i = where.get(id);
    if (i === undefined) throw new Error(`no line for ${id}`);
    return i;
  };
  return {
    text,
    at(sectionName, key, needle) {
      const i = lineIndex(`${sectionName}.${key}`);
      const line = lines[i];
      const valueStart = line.indexOf(': ') + 2;
      const col = needle === undefined ? valueStart : line.indexOf(needle, valueStart);
      if (col < 0) throw new Error(`'${needle}' not on line ${i + 1}: ${line}`);
      return { line: i + 1, column: col + 1 };
    },
    keyAt(sectionName, key) {
      const i = lineIndex(`${sectionName}.${key}`);
      return { line: i + 1, column: lines[i].indexOf(key) + 1 };
    },
    topAt(key) {
      return { line: lineIndex(`top.${key}`) + 1, column: 1 };
    },
  };
}

export interface Checked extends Built {
  findings: Finding[];
  /** Findings of one rule. */
  of(rule: string): Finding[];
  errors: Finding[];
}

export function run(input: SpecInput, options?: CheckOptions): Checked {
  const built = buildSpec(input);
  const result = checkText('spec.md', built.text, options);
  if (result.skipped) throw new Error('the built spec was skipped');
  return {
    ...built,
    findings: result.findings,
    of: (rule) => result.findings.filter((f) => f.rule === rule),
    errors: result.findings.filter((f) => f.severity === 'error'),
  };
}

/** Only the rules named are run (the others are switched off), to keep failing-claim tests fast and focused. */
export function only(...ids: string[]): CheckOptions {
  return { rules: Object.fromEntries(ALL_RULE_IDS.filter((id) => !ids.includes(id)).map((id) => [id, { severity: 'off' as const }])) };
}

export const ALL_RULE_IDS = [
  'dc-gain', 'gain-bandwidth', 'dominant-pole', 'second-pole', 'rhp-zero', 'phase-margin',
  'gain-margin', 'slew-rate', 'second-pole-spacing', 'rhp-zero-spacing', 'hand-estimate-drift', 'prefix-slip',
] as const;

/**
 * The number a design-change suggestion proposes for `param`, read from text
 * such as "cc = 1.43 pF (now 1.20 pF) gives …", as the written value (e.g. "1.43 pF").
 */
export function proposed(suggestions: string[], param: string): string[] {
  const re = new RegExp(`^${param} = ([^ ]+ [^ (]+) \\(now`);
  return suggestions.map((s) => re.exec(s)?.[1]).filter((x): x is string => x !== undefined);
}

/** The claim text a corrected-claim suggestion proposes, e.g. "gbw: 18 MHz" from "… should read `gbw: 18 MHz` …". */
export function correctedClaimText(suggestions: string[]): string[] {
  return suggestions.map((s) => /(?:should read|supports is) `([^`]+)`/.exec(s)?.[1]).filter((x): x is string => x !== undefined);
}
