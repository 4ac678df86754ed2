// Front matter to a positioned tree. js-yaml's event stream gives source
// offsets for every scalar and collection; the constructor run over the same
// events enforces YAML's own rules (duplicate keys, unknown tags, alias
// limits). Every offset is translated to a line and column in the file.

import { type Event, constructFromEvents, getScalarValue, parseEvents } from 'js-yaml';
import type { Pos } from './position';

export type YNode = YScalar | YMap | YSeq;

export interface YScalar {
  kind: 'scalar';
  /** Decoded text of the scalar (quotes removed, escapes applied). */
  text: string;
  /** Plain (unquoted) scalars are the only ones YAML would read as numbers or null. */
  plain: boolean;
  pos: Pos;
  /** File offsets of the scalar's source text, quotes excluded (absent for an empty value). */
  span?: [number, number];
  /**
   * Where the i-th character of `text` stands in the file, when the source is
   * not the text itself (folded lines, escapes, block scalars).
   */
  at?: (i: number) => Pos;
  /** Reached through an alias: the text stands elsewhere. */
  aliased?: boolean;
}

export interface YEntry {
  key: string;
  keyPos: Pos;
  value: YNode;
}

export interface YMap {
  kind: 'map';
  entries: YEntry[];
  pos: Pos;
}

export interface YSeq {
  kind: 'seq';
  items: YNode[];
  pos: Pos;
}

export interface YamlError {
  message: string;
  pos: Pos;
}

export type YamlResult = { ok: true; root: YNode | null } | { ok: false; error: YamlError };

const EVENT = { DOCUMENT: 1, SEQUENCE: 2, MAPPING: 3, SCALAR: 4, ALIAS: 5, POP: 6 } as const;
const PLAIN = 1;
const LITERAL = 4;
const FOLDED = 5;

/** Aliases are a YAML feature no spec needs; a bound keeps expansion attacks out. */
const MAX_ALIASES = 50;
const MAX_DEPTH = 32;

/**
 * Parses `source` (the text between the front-matter fences) and returns the
 * tree. `where(offset)` maps an offset in `source` to a position in the file.
 */
export function parseYaml(source: string, where: (offset: number) => Pos): YamlResult {
  let events: Event[];
  try {
    events = parseEvents(source, { maxDepth: MAX_DEPTH });
  } catch (err) {
    return { ok: false, error: yamlError(err, where, source) };
  }
  const tree = buildTree(source, events, where);
  if (!tree.ok) return tree;
  try {
    // The constructor runs for its checks only (duplicate keys, tags, alias
    // limits); the values come from the events.
    constructFromEvents(events, { source, maxAliases: MAX_ALIASES });
  } catch (err) {
    return { ok: false, error: yamlError(err, where, source) };
  }
  return tree;
}

function buildTree(source: string, events: Event[], where: (offset: number) => Pos): YamlResult {
  const anchors = new Map<string, YNode>();
  let i = 0;
  const next = (): Event | undefined => events[i++];

  const offsetOf = (ev: Event): number =>
    Math.max(0, ev.type === EVENT.SCALAR ? (ev.style === PLAIN ? ev.valueStart : ev.valueStart - 1) : ev.type === EVENT.MAPPING || ev.type === EVENT.SEQUENCE ? ev.start : ev.type === EVENT.ALIAS ? ev.anchorStart - 1 : 0);

  // The first visible character of the line holding `offset` (a `? key` line starts with the `?`).
  const lineStart = (offset: number): number => {
    let i = source.lastIndexOf('\n', offset - 1) + 1;
    while (source[i] === ' ' || source[i] === '\t') i++;
    return i;
  };

  const anchorOf = (ev: { anchorStart: number; anchorEnd: number }): string | undefined =>
    ev.anchorStart >= 0 ? source.slice(ev.anchorStart, ev.anchorEnd) : undefined;

  // `fallback`: where an empty value (no source text) is reported: its key.
  const readNode = (ev: Event, fallback?: Pos): YNode => {
    if (ev.type === EVENT.SCALAR) {
      const empty = ev.valueStart < 0;
      const block = ev.style === LITERAL || ev.style === FOLDED;
      const node: YScalar = { kind: 'scalar', text: empty ? '' : getScalarValue(source, ev), plain: ev.style === PLAIN, pos: empty ? (fallback ?? where(0)) : where(ev.valueStart) };
      if (ev.style !== PLAIN && !block && ev.valueStart > 0) node.pos = where(ev.valueStart - 1); // point at the opening quote
      if (block && !empty) {
        // A block scalar's source runs from the line after its header over
        // indentation and line breaks: its place and its editable span are
        // the content's first to last visible character, so that an edit
        // keeps the indentation, the line breaks and the chomping.
        let s = ev.valueStart;
        let e = ev.valueEnd;
        while (s < e && /\s/.test(source[s])) s++;
        while (e > s && /\s/.test(source[e - 1])) e--;
        if (s < e) {
          node.pos = where(s);
          node.span = [where(s).offset, where(e).offset];
        } else {
          // Nothing written: the place is the header's indicator (`|`, `>-`).
          const header = source.lastIndexOf('\n', Math.max(0, ev.valueStart - 2));
          const line = source.slice(header + 1, Math.max(header + 1, ev.valueStart));
          const ind = line.search(/[|>]/);
          node.pos = where(ind >= 0 ? header + 1 + ind : Math.max(0, ev.valueStart - 1));
          const at = node.pos;
          node.at = () => at;
        }
      } else if (!empty) node.span = [where(ev.valueStart).offset, where(ev.valueEnd).offset];
      if (!empty) {
        const raw = source.slice(ev.valueStart, ev.valueEnd);
        if (raw !== node.text) {
          // Align the decoded text with its source greedily, when a place is
          // asked for: each character is found at or after the previous
          // one's place (folding drops line breaks and indentation, escapes
          // spell a character in several), looking a bounded way ahead so
          // that a long scalar is aligned in linear time.
          let map: number[] | undefined;
          const align = (): number[] => {
            const m: number[] = [];
            let j = 0;
            for (const ch of node.text) {
              let k = j;
              const stop = Math.min(raw.length, j + 256);
              while (k < stop && raw[k] !== ch) k++;
              if (k < stop) j = k;
              m.push(ev.valueStart + j);
              for (let u = 1; u < ch.length; u++) m.push(ev.valueStart + j);
              if (k < stop) j++;
            }
            return m;
          };
          node.at = (i: number) => {
            map ??= align();
            return where(map[Math.min(i, map.length - 1)] ?? ev.valueStart);
          };
        }
      }
      const a = anchorOf(ev);
      if (a) anchors.set(a, node);
      return node;
    }
    if (ev.type === EVENT.ALIAS) {
      const name = source.slice(ev.anchorStart, ev.anchorEnd);
      const target = anchors.get(name);
      if (!target) throw new AliasError(`front matter is not valid YAML: unidentified alias "${name}"`, Math.max(0, ev.anchorStart - 1));
      // The value is the anchor's; the place is where it is used (its key, for a mapping value).
      const use = where(Math.max(0, ev.anchorStart - 1));
      return (target.kind === 'scalar' ? { ...target, pos: use, aliased: true, at: undefined, span: undefined } : { ...target, pos: use }) as YNode;
    }
    if (ev.type === EVENT.MAPPING) {
      const node: YMap = { kind: 'map', entries: [], pos: where(ev.start) };
      const a = anchorOf(ev);
      for (let e = next(); e && e.type !== EVENT.POP; e = next()) {
        const keyNode = readNode(e);
        if (keyNode.kind !== 'scalar') throw new AliasError('front matter is not valid YAML: a mapping key must be a plain name, not a list or a mapping', lineStart(offsetOf(e)));
        const valueEvent = next();
        if (!valueEvent) break;
        const value = readNode(valueEvent, keyNode.pos);
        const key = keyNode.text;
        node.entries.push({ key, keyPos: keyNode.pos, value });
      }
      if (a) anchors.set(a, node);
      return node;
    }
    if (ev.type === EVENT.SEQUENCE) {
      const node: YSeq = { kind: 'seq', items: [], pos: where(ev.start) };
      const a = anchorOf(ev);
      for (let e = next(); e && e.type !== EVENT.POP; e = next()) node.items.push(readNode(e));
      if (a) anchors.set(a, node);
      return node;
    }
    throw new AliasError('unexpected YAML structure', 0);
  };

  try {
    let root: YNode | null = null;
    for (let e = next(); e; e = next()) {
      if (e.type === EVENT.DOCUMENT) {
        const content = next();
        if (content && content.type !== EVENT.POP) {
          if (root) return { ok: false, error: { message: 'front matter holds more than one YAML document', pos: where(offsetOf(content)) } };
          root = readNode(content);
          next(); // the document's POP
        }
      }
    }
    return { ok: true, root };
  } catch (err) {
    if (err instanceof AliasError) return { ok: false, error: { message: err.message, pos: where(err.offset) } };
    throw err;
  }
}

class AliasError extends Error {
  constructor(
    message: string,
    readonly offset: number,
  ) {
    super(message);
  }
}

function yamlError(err: unknown, where: (offset: number) => Pos, source: string): YamlError {
  const e = err as { reason?: string; message?: string; mark?: { position?: number } };
  const reason = e.reason ?? e.message ?? String(err);
  let offset = e.mark && typeof e.mark.position === 'number' ? e.mark.position : 0;
  // For an alias, point at its `*`, not at the name after it.
  if (source[offset - 1] === '*') offset -= 1;
  if (reason.includes('multiline key')) {
    // YAML notices a line without its colon only on the next line: point at the line itself.
    const before = source.slice(0, source.lastIndexOf('\n', offset - 1) + 1 || 0).trimEnd(); // not /\s+$/: that backtracks on a long run of spaces
    const start = before.lastIndexOf('\n') + 1;
    const line = before.slice(start);
    const indent = line.length - line.trimStart().length;
    if (line.trim() && !line.includes(':')) return { message: `front matter is not valid YAML: \`${line.trim()}\` is not \`key: value\` (a colon is missing)`, pos: where(start + indent) };
  }
  return { message: `front matter is not valid YAML: ${reason}`, pos: where(offset) };
}
