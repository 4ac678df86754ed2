// Builds spec text from plain objects, so that rule tests state only what
// they are about, and finds where a written value sits in that text (1-based
// line and column, as SPEC-FORMAT §4 defines them) by searching the text
// itself, independently of the tool's YAML reader.

import { checkText, type CheckOptions } from '../../../src/check';
import type { Finding } from '../../../src/verdicts/findings';
import type { Design } from './closed-form';

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

/** The claim text a corrected-claim suggestion proposes, e.g. "gbw: 18 MHz" from "… should read `gbw: 18 MHz` …". */
export function correctedClaimText(suggestions: string[]): string[] {
  return suggestions.map((s) => /(?:should read|supports is) `([^`]+)`/.exec(s)?.[1]).filter((x): x is string => x !== undefined);
}

// ---------------------------------------------------------------------------
// Plain SI values of the written params and conditions, read by a parser of
// this file's own (prefix letter + unit), so the closed-form expectations do
// not depend on the tool's quantity parser.

const PREFIX: Record<string, number> = { f: 1e-15, p: 1e-12, n: 1e-9, '\u00b5': 1e-6, '\u03bc': 1e-6, u: 1e-6, m: 1e-3, k: 1e3, M: 1e6, G: 1e9 };

/** '2.2 MΩ' → 2.2e6, '45 fF' → 4.5e-14, '0.5' → 0.5 (simple scalars only). */
export function si(text: string): number {
  const m = /^\s*([0-9.]+(?:e[+-]?\d+)?)\s*([fpn\u00b5\u03bcumkMG]?)(S|\u03a9|\u2126|F|A|Hz)?\s*$/.exec(text);
  if (!m) throw new Error(`si(): cannot read '${text}'`);
  const scale = m[2] ? PREFIX[m[2]] : 1;
  // Repeat the multiplication in decimal to avoid 2.2 * 1e6 = 2200000.0000000005 style noise.
  return Number((Number(m[1]) * scale).toPrecision(15));
}

/** The design of a SpecInput as plain numbers for the closed-form module (simple scalar values only). */
export function designOf(input: SpecInput): Design {
  const out: Record<string, number> = {};
  for (const [k, v] of Object.entries({ ...input.params, ...(input.conditions ?? {}) })) {
    if (v === 'open') continue;
    out[k] = si(v);
  }
  for (const k of ['gm1', 'r1', 'c1', 'gm2', 'r2', 'c2', 'cc']) if (!(k in out)) throw new Error(`designOf(): no ${k}`);
  return out as unknown as Design;
}

/** The spec with some params, conditions or claims replaced. */
export function withValues(input: SpecInput, change: { params?: Record<string, string>; conditions?: Record<string, string>; claims?: Record<string, string> }): SpecInput {
  return {
    ...input,
    params: { ...input.params, ...change.params },
    conditions: { ...input.conditions, ...change.conditions },
    claims: { ...input.claims, ...change.claims },
  };
}

/**
 * Applies each design change a suggestion proposes ("cc = 1.43 pF (now …) gives …",
 * or "rz = 625 Ω and cc = … (now …)") and returns the changed specs.
 */
export function designChangeSpecs(input: SpecInput, suggestions: string[]): Array<{ suggestion: string; spec: SpecInput }> {
  const out: Array<{ suggestion: string; spec: SpecInput }> = [];
  for (const s of suggestions) {
    const head = /^(.*?) \(now/.exec(s)?.[1];
    if (!head || !/ gives /.test(s)) continue;
    const params: Record<string, string> = {};
    for (const part of head.split(' and ')) {
      const m = /^(\w+) = (.+)$/.exec(part.trim());
      if (!m) continue;
      params[m[1]] = m[2];
    }
    if (Object.keys(params).length) out.push({ suggestion: s, spec: withValues(input, { params }) });
  }
  return out;
}

/**
 * The reference design of the rule tests (an invented Strand-8 front-end
 * amplifier). Its figures, from the closed form: A0 = 20·log10(95040) =
 * 99.56 dB, GBW 23.6 MHz, p1 250 Hz, p2 171 MHz, z = gm2/(2π·cc) = 318 MHz,
 * PM 77.9°, GM 22.5 dB, SR = min(16.7, 90) V/µs; no rule of thumb is broken.
 */
export const BASE: SpecInput = {
  block: 'strand-test-amp',
  params: { gm1: '180 µS', r1: '2.2 MΩ', c1: '45 fF', gm2: '2.4 mS', r2: '100 kΩ', c2: '120 fF', cc: '1.2 pF', i1: '20 µA', i2: '200 µA' },
  conditions: { cl: '2 pF' },
  claims: {},
};

/** BASE with these claims, and optionally some params or conditions replaced. */
export const variant = (claims: Record<string, string>, more: { params?: Record<string, string>; conditions?: Record<string, string> } = {}): SpecInput =>
  withValues(BASE, { claims, params: more.params, conditions: more.conditions });
