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
    // Run the constructor for its checks only; the values come from the events.
    constructFromEvents(events, { source, maxAliases: MAX_ALIASES });
  } catch (err) {
    return { ok: false, error: yamlError(err, where, source) };
  }
  const anchors = new Map<string, YNode>();
  let i = 0;
  const next = (): Event | undefined => events[i++];

  const anchorOf = (ev: { anchorStart: number; anchorEnd: number }): string | undefined =>
    ev.anchorStart >= 0 ? source.slice(ev.anchorStart, ev.anchorEnd) : undefined;

  // `fallback`: where an empty value (no source text) is reported: its key.
  const readNode = (ev: Event, fallback?: Pos): YNode => {
    if (ev.type === EVENT.SCALAR) {
      const empty = ev.valueStart < 0;
      const node: YScalar = { kind: 'scalar', text: empty ? '' : getScalarValue(source, ev), plain: ev.style === PLAIN, pos: empty ? (fallback ?? where(0)) : where(ev.valueStart) };
      if (ev.style !== PLAIN && ev.valueStart > 0) node.pos = where(ev.valueStart - 1); // point at the opening quote
      if (!empty) node.span = [where(ev.valueStart).offset, where(ev.valueEnd).offset];
      const a = anchorOf(ev);
      if (a) anchors.set(a, node);
      return node;
    }
    if (ev.type === EVENT.ALIAS) {
      const name = source.slice(ev.anchorStart, ev.anchorEnd);
      const target = anchors.get(name);
      if (!target) throw new AliasError(`unknown alias *${name}`, ev.anchorStart);
      return target;
    }
    if (ev.type === EVENT.MAPPING) {
      const node: YMap = { kind: 'map', entries: [], pos: where(ev.start) };
      const a = anchorOf(ev);
      for (let e = next(); e && e.type !== EVENT.POP; e = next()) {
        const keyNode = readNode(e);
        const valueEvent = next();
        if (!valueEvent) break;
        const value = readNode(valueEvent, keyNode.pos);
        const key = keyNode.kind === 'scalar' ? keyNode.text : `[${keyNode.kind}]`;
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
          if (root) return { ok: false, error: { message: 'front matter holds more than one YAML document', pos: where(0) } };
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
  const offset = e.mark && typeof e.mark.position === 'number' ? e.mark.position : 0;
  if (reason.includes('multiline key')) {
    // YAML notices a line without its colon only on the next line: point at the line itself.
    const before = source.slice(0, source.lastIndexOf('\n', offset - 1) + 1 || 0).replace(/\s+$/, '');
    const start = before.lastIndexOf('\n') + 1;
    const line = before.slice(start);
    const indent = line.length - line.trimStart().length;
    if (line.trim() && !line.includes(':')) return { message: `front matter is not valid YAML: \`${line.trim()}\` is not \`key: value\` (a colon is missing)`, pos: where(start + indent) };
  }
  return { message: `front matter is not valid YAML: ${reason}`, pos: where(offset) };
}
