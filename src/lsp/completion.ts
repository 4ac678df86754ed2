// Completion in the front matter, from the definitions the reader validates
// against and `polecheck schema` is generated from (the topologies' keys,
// the format's top-level keys, the unit table): top-level keys, topologies,
// the keys of params, conditions and claims with their meaning and unit, a
// claim's bounds and arguments, and units after a number. Read from the raw
// lines, so it works in a half-typed document that does not parse.

import { type CompletionItem, CompletionItemKind, type Position } from 'vscode-languageserver';
import { CANONICAL_UNIT, DISPLAY_UNIT, KIND_EXAMPLE, type Kind, UNITS } from '../quantity';
import { TOP_KEYS } from '../spec/schema';
import { TOPOLOGIES } from '../topologies';
import type { ClaimSpec, KeySpec, Topology } from '../topologies/types';

const TOP_DOC: Record<string, string> = {
  polecheck: 'the format version (1); marks the file as a spec',
  block: 'the block id',
  title: 'the block title',
  topology: 'the small-signal topology the params describe',
  network: 'a user-defined small-signal network (topology: network)',
  params: 'stage parameters of the design',
  conditions: 'operating conditions: load, feedback factor, supply',
  claims: 'performance claimed in the datasheet, checked against the model',
  waivers: 'accepted deviations, each with its rule, reason and expiry',
};

const SECTIONS = ['params', 'conditions', 'claims'] as const;
type Section = (typeof SECTIONS)[number];

const unitOf = (kind: Kind): string => (kind === 'ratio' ? 'a bare number or %' : `${DISPLAY_UNIT[kind]}, e.g. ${KIND_EXAMPLE[kind]}`);

function keyItem(k: KeySpec | ClaimSpec, section: Section): CompletionItem {
  return {
    label: k.key,
    kind: section === 'claims' ? CompletionItemKind.Property : CompletionItemKind.Field,
    detail: `${k.kind} (${unitOf(k.kind)})`,
    documentation: `${k.description}${'required' in k && k.required ? ' (required)' : ''}`,
    insertText: `${k.key}: `,
  };
}

/** The front matter's lines: from the opening fence to the closing one (or the end while it is being typed). */
function frontMatter(lines: string[]): { end: number } | undefined {
  if (!/^\ufeff?---[ \t]*$/.test(lines[0] ?? '')) return undefined;
  for (let i = 1; i < lines.length; i++) if (/^---[ \t]*$/.test(lines[i])) return { end: i };
  return { end: lines.length };
}

function topologyOf(lines: string[], end: number): Topology | undefined {
  for (let i = 1; i < end; i++) {
    const m = /^topology[ \t]*:[ \t]*["']?([\w-]+)/.exec(lines[i]);
    // A user-defined network's params are its own (under `network:`): no keys to offer.
    if (m) return TOPOLOGIES.find((t) => t.id === m[1]);
  }
  return undefined;
}

const indentOf = (l: string): number => /^[ \t]*/.exec(l)![0].length;

/** The top-level section a line belongs to, and the key of the entry it is nested in (a claim's bounds). */
function sectionAt(lines: string[], line: number): { section?: string; sectionIndent?: number; parent?: string } {
  let parent: string | undefined;
  let below = indentOf(lines[line] ?? '');
  for (let i = line - 1; i >= 1; i--) {
    const l = lines[i];
    if (!l.trim() || /^[ \t]*#/.test(l)) continue;
    const ind = indentOf(l);
    const key = /^[ \t]*["']?([\w-]+)["']?[ \t]*:/.exec(l)?.[1];
    if (ind === 0) return { section: key, sectionIndent: undefined, parent };
    if (ind < below && key) {
      parent ??= key;
      below = ind;
    }
  }
  return {};
}

/** Units of a kind in their usual spellings (prefix symbols, µ for micro), each checked against the unit table. */
export function unitsOf(kind: Kind): string[] {
  const base = kind === 'slew' ? 'V/s' : CANONICAL_UNIT[kind];
  const prefixes = ['f', 'p', 'n', 'µ', 'm', '', 'k', 'M', 'G', 'T'];
  let candidates: string[];
  if (kind === 'slew') candidates = ['V/µs', 'V/ns', 'V/ms', 'V/s', 'kV/µs'];
  else if (kind === 'noise') candidates = ['nV/√Hz', 'µV/√Hz', 'pV/√Hz', 'V/√Hz'];
  else if (kind === 'gain') candidates = ['dB', 'V/V'];
  else if (kind === 'angle') candidates = ['deg', '°'];
  else if (kind === 'ratio') candidates = ['%'];
  else if (kind === 'temperature' || kind === 'fom') candidates = [base];
  else candidates = [...prefixes.map((p) => p + base), ...(kind === 'voltage' ? prefixes.map((p) => `${p}Vrms`) : [])];
  return candidates.filter((u) => UNITS.get(u)?.kind === kind);
}

const NUMBER = /([+\-\u2212]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+\-\u2212]?\d+)?)[ \t]*([^\s,}\]#]*)$/;

export function complete(text: string, lines: string[], p: Position): CompletionItem[] {
  const fm = frontMatter(lines);
  if (!fm || p.line === 0 || p.line >= fm.end) return [];
  const line = lines[p.line] ?? '';
  const before = line.slice(0, p.character);
  const topology = topologyOf(lines, fm.end);

  // topology: <id>
  if (/^topology[ \t]*:[ \t]*[\w-]*$/.test(before)) {
    return [
      ...TOPOLOGIES.map((t) => ({ label: t.id, kind: CompletionItemKind.EnumMember, detail: t.title, documentation: `params: ${t.params.filter((k) => k.required).map((k) => k.key).join(', ')}` })),
      { label: 'network', kind: CompletionItemKind.EnumMember, detail: 'User-defined small-signal network', documentation: 'elements listed under `network:`' },
    ];
  }

  // A key being typed: nothing but a word (or a flow mapping's next key) before the cursor.
  const keyTyped = /^([ \t]*)(?:-[ \t]+)?[\w-]*$/.exec(before) ?? /^([ \t]*)[\w-]+[ \t]*:[ \t]*\{(?:[^}]*,)?[ \t]*[\w-]*$/.exec(before);
  if (keyTyped) {
    const flow = /\{[^}]*$/.test(before);
    if (!flow && keyTyped[1].length === 0) {
      const present = new Set(lines.slice(1, fm.end).map((l) => /^([\w-]+)[ \t]*:/.exec(l)?.[1]).filter(Boolean));
      return TOP_KEYS.filter((k) => !present.has(k)).map((k) => ({ label: k, kind: CompletionItemKind.Module, documentation: TOP_DOC[k], insertText: `${k}: ` }));
    }
    const where = sectionAt(lines, p.line);
    if (!topology || !where.section || !(SECTIONS as readonly string[]).includes(where.section)) return [];
    const section = where.section as Section;
    // Inside one claim's mapping: its bounds and its own arguments.
    const owner = flow ? /^[ \t]*([\w-]+)[ \t]*:/.exec(before)?.[1] : where.parent;
    if (owner) {
      if (section !== 'claims' && section !== 'params' && section !== 'conditions') return [];
      const claim = topology.claims.find((c) => c.key === owner);
      const spec = claim ?? [...topology.params, ...topology.conditions].find((k) => k.key === owner);
      if (!spec) return [];
      const bounds = ['min', 'typ', 'max'].map((b) => ({ label: b, kind: CompletionItemKind.Keyword, detail: `${spec.kind} (${unitOf(spec.kind)})`, insertText: `${b}: ` }));
      const args = (claim?.args ?? []).map((a) => ({ label: a.key, kind: CompletionItemKind.Keyword, detail: `${a.kind} (${unitOf(a.kind)})`, documentation: a.description, insertText: `${a.key}: ` }));
      return [...bounds, ...args];
    }
    const keys: Array<KeySpec | ClaimSpec> = section === 'params' ? topology.params : section === 'conditions' ? topology.conditions : topology.claims;
    // Keys already written in this section are not offered again.
    const present = new Set<string>();
    for (let i = p.line + 1; i < fm.end && indentOf(lines[i]) > 0; i++) present.add(/^[ \t]*([\w-]+)[ \t]*:/.exec(lines[i])?.[1] ?? '');
    for (let i = p.line - 1; i >= 1 && indentOf(lines[i]) > 0; i--) present.add(/^[ \t]*([\w-]+)[ \t]*:/.exec(lines[i])?.[1] ?? '');
    return keys.filter((k) => !present.has(k.key)).map((k) => keyItem(k, section));
  }

  // A unit after a number: `gbw: 21 `, `cc: 1.5 p`, `phase_margin: {min: 60 `.
  const value = /^[ \t]*([\w-]+)[ \t]*:(.*)$/.exec(before);
  const num = value && NUMBER.exec(value[2]);
  if (value && num && topology) {
    const where = sectionAt(lines, p.line);
    const key = value[1] === 'typ' || value[1] === 'min' || value[1] === 'max' ? where.parent : value[1];
    const all: Array<KeySpec | ClaimSpec> = [...topology.params, ...topology.conditions, ...topology.claims];
    const spec = all.find((k) => k.key === key);
    if (!spec) return [];
    const n = Number(num[1].replace('\u2212', '-'));
    const plausible = 'plausible' in spec ? spec.plausible : undefined;
    const typed = num[2];
    const replaceFrom = p.character - typed.length;
    return unitsOf(spec.kind).map((u, i) => {
      const def = UNITS.get(u)!;
      const si = n * 10 ** def.exp10;
      const fits = plausible ? si >= plausible[0] && si <= plausible[1] : false;
      const withSpace = typed === '' && !/[ \t]$/.test(before) ? ' ' : '';
      return {
        label: u,
        kind: CompletionItemKind.Unit,
        detail: `${spec.key}: ${num[1]} ${u}`,
        sortText: `${fits ? '0' : '1'}${String(i).padStart(2, '0')}`,
        ...(fits ? { preselect: true } : {}),
        textEdit: { range: { start: { line: p.line, character: replaceFrom }, end: p }, newText: `${withSpace}${u}` },
      };
    });
  }
  return [];
}
