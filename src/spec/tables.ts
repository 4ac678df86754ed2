// Datasheet tables in the Markdown body (SPEC-FORMAT §3): a GFM table whose
// header has a `Parameter` column and at least one of Min, Typ, Max (optional
// Symbol, Conditions, Unit). Each row that names a known claim becomes a claim
// at its own conditions; the findings point at the cells.

import type { Finding } from '../verdicts/findings';
import { type Kind, parseQuantity } from '../quantity';
import { SETTLING_BAND, STEP_INPUT, betaFromGain } from '../topologies/common';
import type { KeySpec, Topology, Values } from '../topologies/types';
import { parseGain } from './closed-loop-conditions';
import { editDistance, nearest } from './nearest';
import type { Pos } from './position';
import type { ClaimEntry, QuantityAt, RowConditions } from './types';

// Minimal mdast shapes, so this module does not depend on @types/mdast.
interface MdNode {
  type: string;
  value?: string;
  children?: MdNode[];
  position?: { start: { line: number; column: number; offset?: number } };
}

/**
 * How datasheets name each claim, by symbol or by parameter name, compared
 * after lower-casing and dropping spaces, hyphens, underscores and dots.
 */
export const CLAIM_ALIASES: Record<string, string[]> = {
  dc_gain: ['A0', 'AOL', 'AVOL', 'AV0', 'DC gain', 'Open-loop gain', 'Open-loop DC gain', 'DC open-loop gain', 'Open-loop voltage gain', 'Large-signal voltage gain'],
  gbw: ['GBW', 'GBP', 'UGF', 'UGB', 'fu', 'Gain-bandwidth', 'Gain-bandwidth product', 'Gain bandwidth', 'Unity-gain bandwidth', 'Unity-gain frequency'],
  p1: ['p1', 'fp1', 'Dominant pole', 'First pole'],
  p2: ['p2', 'fp2', 'Second pole', 'Non-dominant pole'],
  rhp_zero: ['z', 'fz', 'RHP zero', 'Right-half-plane zero', 'Right half-plane zero'],
  phase_margin: ['PM', 'φm', 'Phase margin'],
  gain_margin: ['Gain margin'],
  slew_rate: ['SR', 'Slew rate'],
  bandwidth: ['BW', 'f-3dB', 'f3dB', '−3 dB bandwidth', '-3 dB bandwidth', 'Bandwidth', 'Small-signal bandwidth'],
  input_capacitance: ['Cin', 'CIN', 'Input capacitance'],
  closed_loop_gain: ['ACL', 'AVCL', 'Closed-loop gain', 'Closed-loop voltage gain'],
  // The open-loop −3 dB names too: in a row that states a gain they mean the closed loop (see matchClaim).
  closed_loop_bandwidth: ['Closed-loop bandwidth', 'BW', 'f-3dB', 'f3dB', '−3 dB bandwidth', '-3 dB bandwidth', 'Bandwidth', 'Small-signal bandwidth'],
  peaking: ['Peaking', 'Gain peaking', 'Mp'],
  overshoot: ['OS', 'Overshoot', 'Small-signal overshoot'],
  rise_time: ['tr', 'tR', 'Rise time', '10-90 % rise time', 'Rise time (10-90 %)'],
  settling_time: ['ts', 'tS', 'tSET', 'Settling time'],
};

/** Condition names as datasheets write them. */
const CONDITION_ALIASES: Record<string, string[]> = {
  cl: ['CL', 'CLOAD', 'Load capacitance'],
  rl: ['RL', 'RLOAD', 'Load resistance'],
  beta: ['β', 'beta', 'B', 'Feedback factor'],
  rs: ['RS', 'Source resistance'],
};

/** Names of the closed loop's conditions, read by readLoopItem. */
const GAIN_NAMES = ['G', 'Gain', 'AV', 'ACL', 'AVCL', 'Closed-loop gain', 'Signal gain'];
const STEP_NAMES = ['Step', 'VSTEP', 'Output step', 'VOUT step', 'VO step'];
const INPUT_STEP_NAMES = ['Input step', 'VIN step'];
const BAND_NAMES = ['Band', 'Settling band', 'Error band'];

/** Datasheet conditions outside the small-signal model (supplies, temperature, signal): never a misspelt model condition. */
const OUTSIDE_MODEL = new Set(['t', 'ta', 'tj', 'temp', 'temperature', 'vdd', 'vcc', 'vs', 'vss', 'vee', 'vcm', 'vin', 'vout', 'vo', 'f', 'freq', ...GAIN_NAMES.map((g) => g.toLowerCase().replace(/[\s\-_.]/g, ''))]);

const norm = (s: string): string => s.toLowerCase().replace(/[\s\-_.]/g, '').replace(/\u2212/g, '-');

const EMPTY = new Set(['', '—', '–', '-', '−', 'n/a', 'na', '…']);

function text(n: MdNode): string {
  if (n.type === 'text' || n.type === 'inlineCode') return n.value ?? '';
  return (n.children ?? []).map(text).join('');
}

function firstTextPos(n: MdNode): Pos | undefined {
  if ((n.type === 'text' || n.type === 'inlineCode') && n.position) {
    const s = n.position.start;
    return { line: s.line, column: s.column + (n.type === 'inlineCode' ? 1 : 0), offset: s.offset ?? 0 };
  }
  for (const c of n.children ?? []) {
    const p = firstTextPos(c);
    if (p) return p;
  }
  return undefined;
}

interface Cell {
  text: string;
  pos: Pos;
  /**
   * Offsets of the cell's text in the source, when the source spells exactly
   * the text (no escapes, entities or inline markup), so that an edit there
   * changes what the cell reads; otherwise why it cannot be edited.
   */
  span: { start: number; end: number } | { refused: string };
}

interface MdEnd {
  position?: { start: { offset?: number }; end?: { offset?: number } };
}

function cellOf(n: MdNode | undefined, source: string): Cell | undefined {
  if (!n?.position) return undefined;
  const raw = text(n);
  const start = firstTextPos(n) ?? { line: n.position.start.line, column: n.position.start.column, offset: n.position.start.offset ?? 0 };
  // Point at the first visible character, past leading spaces of the text.
  const lead = raw.length - raw.trimStart().length;
  const shown = raw.trim();
  const pos = { ...start, column: start.column + lead, offset: start.offset + lead };
  // The cell's own source, between its pipes: an edit is made there only if it spells the text as read.
  const from = n.position.start.offset;
  const to = (n as MdEnd).position?.end?.offset;
  let span: Cell['span'] = { refused: 'its source could not be located' };
  if (from !== undefined && to !== undefined) {
    let a = from;
    let b = to;
    if (source[a] === '|') a++;
    if (b > a && source[b - 1] === '|' && source[b - 2] !== '\\') b--;
    while (a < b && (source[a] === ' ' || source[a] === '\t')) a++;
    while (b > a && (source[b - 1] === ' ' || source[b - 1] === '\t')) b--;
    const written = source.slice(a, b);
    if (written === shown) span = { start: a, end: b };
    else {
      const how = /\\[!-\/:-@[-`{-~]/.test(written) ? 'a backslash escape' : /&(?:#\d+|#[xX][0-9a-fA-F]+|[A-Za-z][A-Za-z0-9]*);/.test(written) ? 'an HTML entity' : 'Markdown markup';
      span = { refused: `the cell \`${written.length > 40 ? `${written.slice(0, 37)}…` : written}\` is written with ${how}, so its text is not where it reads; restate it by hand` };
    }
  }
  return { text: shown, pos, span };
}

export interface TableResult {
  claims: ClaimEntry[];
  findings: Finding[];
}

const finding = (rule: string, severity: Finding['severity'], pos: Pos, message: string, suggestions: string[] = [], claim: string | null = null): Finding => ({
  rule,
  severity,
  line: pos.line,
  column: pos.column,
  claim,
  message,
  suggestions,
});

/**
 * The claim a row states, by its symbol or name. A name both claims answer
 * to (`Bandwidth` for the open loop and the closed loop) means the closed
 * loop in a row that states a gain, as datasheets use it.
 */
function matchClaim(topology: Topology, symbol: string | undefined, name: string, closedLoop: boolean): string | undefined {
  const known = new Set(topology.claims.map((c) => c.key));
  for (const candidate of [symbol, name]) {
    if (!candidate) continue;
    const n = norm(candidate);
    const keys = Object.entries(CLAIM_ALIASES).filter(([key, aliases]) => known.has(key) && (norm(key) === n || aliases.some((a) => norm(a) === n))).map(([key]) => key);
    if (keys.length > 1 && keys.includes('bandwidth') && keys.includes('closed_loop_bandwidth')) return closedLoop ? 'closed_loop_bandwidth' : 'bandwidth';
    if (keys.length) return keys[0];
  }
  return undefined;
}

/** "Settling time to 0.01 %", "Settling time (0.1 %)": the name and the band it states. */
function bandInName(name: string): { name: string; band: string } | undefined {
  // The pattern backtracks: only a name of datasheet length is tried.
  if (name.length > 120) return undefined;
  const m = /^(.*?)[\s,]*(?:\(\s*(?:to\s+)?([0-9.]+\s*%)\s*\)|\bto\s+([0-9.]+\s*%))\s*$/i.exec(name);
  return m && m[1] ? { name: m[1], band: (m[2] ?? m[3]).replace(/\s+/g, ' ') } : undefined;
}

const matches = (names: string[], raw: string): boolean => names.some((a) => norm(a) === norm(raw));

/**
 * The closed loop's items of a Conditions cell: `G = +10` (and `β` with it),
 * `Step = 1 V`, `Input step = 100 mV`, `Band = 0.01 %`, and the phrases
 * `1 V step`, `100 mV input step`, `to 0.01 %`. Undefined: not one of them.
 */
function readLoopItem(item: string, rawName: string | undefined, rawValue: string | undefined, topology: Topology): { set: Values; shown: string } | { error: string } | undefined {
  const loop = topology.claims.some((c) => c.key === 'settling_time');
  if (!loop) return undefined;
  let kind: 'gain' | 'step' | 'input' | 'band' | undefined;
  let value = rawValue;
  if (rawName !== undefined) {
    kind = matches(GAIN_NAMES, rawName) ? 'gain' : matches(STEP_NAMES, rawName) ? 'step' : matches(INPUT_STEP_NAMES, rawName) ? 'input' : matches(BAND_NAMES, rawName) ? 'band' : undefined;
  } else {
    if (item.length > 120) return undefined;
    const to = /^to\s+(.+%)$/i.exec(item);
    const step = /^(.+?V)\s+(?:(input|output)\s+)?step$/i.exec(item);
    if (to) (kind = 'band'), (value = to[1]);
    else if (step) (kind = step[2]?.toLowerCase() === 'input' ? 'input' : 'step'), (value = step[1]);
  }
  if (!kind || value === undefined) return undefined;
  if (value.length > 120) return { error: `condition \`${item.slice(0, 60)}…\`: a value of ${value.length} characters` };
  if (kind === 'gain') {
    const g = parseGain(value);
    if (!g.ok) return { error: `condition \`${item}\`: ${g.message}` };
    return { set: { gain: g.value, beta: betaFromGain(g.value) }, shown: `G = ${g.written.text}` };
  }
  if (kind === 'band') {
    const q = parseQuantity(value, 'ratio');
    if (!q.ok) return { error: `condition \`${item}\`: ${q.message}` };
    if (!(q.quantity.value > 0 && q.quantity.value < 0.5)) return { error: `condition \`${item}\`: a settling band is a small fraction of the final value, such as \`0.1 %\`` };
    return { set: { [SETTLING_BAND]: q.quantity.value }, shown: `band ${q.quantity.written.text}` };
  }
  const q = parseQuantity(value, 'voltage');
  if (!q.ok) return { error: `condition \`${item}\`: ${q.message}` };
  if (!(q.quantity.value > 0)) return { error: `condition \`${item}\`: a step is a positive voltage` };
  // Each sets the other to none, so that a row's step replaces the front matter's either way.
  return kind === 'step'
    ? { set: { step: q.quantity.value, [STEP_INPUT]: 0 }, shown: `${q.quantity.written.text} step` }
    : { set: { [STEP_INPUT]: q.quantity.value, step: 0 }, shown: `${q.quantity.written.text} input step` };
}

/** Parses `CL = 10 pF, β = 0.5; RL = 2 kΩ` into condition overrides. */
function readConditions(cell: Cell, topology: Topology, out: Finding[]): RowConditions | null | undefined {
  if (EMPTY.has(cell.text.toLowerCase())) return undefined;
  const values: Values = {};
  const shown: string[] = [];
  let ok = true;
  let offset = 0;
  for (const part of cell.text.split(/[,;]/)) {
    const at: Pos = { ...cell.pos, column: cell.pos.column + offset + (part.length - part.trimStart().length), offset: cell.pos.offset + offset };
    offset += part.length + 1;
    const item = part.trim();
    if (!item) continue;
    // indexOf, not a backtracking pattern: a cell may be very long.
    const at_ = item.indexOf('=');
    const eq = at_ > 0 && item.slice(at_ + 1).trim() ? [item, item.slice(0, at_).trim(), item.slice(at_ + 1).trim()] : null;
    const loop = readLoopItem(item, eq?.[1], eq?.[2], topology);
    if (loop) {
      if ('error' in loop) {
        out.push(finding('wrong-unit', 'error', at, loop.error));
        ok = false;
        continue;
      }
      // A gain and a β in one cell must describe one loop.
      const beta = loop.set.beta;
      if (beta !== undefined && values.beta !== undefined && Math.abs(values.beta - beta) > 0.02 * beta) {
        out.push(finding('invalid-value', 'error', at, `\`${item}\` means β = ${+beta.toPrecision(4)}, but the cell also states β = ${+values.beta.toPrecision(4)}: they must agree`));
        ok = false;
        continue;
      }
      Object.assign(values, loop.set);
      shown.push(loop.shown);
      continue;
    }
    if (!eq) {
      out.push(finding('table', 'warning', at, `condition \`${item}\` is not understood (not \`NAME = VALUE\`): the row is judged without it`));
      continue;
    }
    const [, rawName, rawValue] = eq;
    const key = Object.entries(CONDITION_ALIASES).find(([k, aliases]) => norm(k) === norm(rawName) || aliases.some((a) => norm(a) === norm(rawName)))?.[0];
    const spec: KeySpec | undefined = topology.conditions.find((c) => c.key === key);
    if (!spec) {
      // Supply, temperature and signal conditions are common in datasheets and outside the model.
      const near = nearest(rawName, Object.values(CONDITION_ALIASES).flat());
      if (near && !OUTSIDE_MODEL.has(norm(rawName)) && editDistance(norm(rawName), norm(near)) <= 1) {
        const k = Object.entries(CONDITION_ALIASES).find(([, a]) => a.includes(near))![0];
        out.push(finding('unknown-key', 'error', at, `unknown condition \`${rawName}\`; did you mean \`${near}\` (${k})?`, [`write \`${near} = ${rawValue}\``]));
        ok = false;
      } else {
        out.push(finding('table', 'warning', at, `condition \`${rawName}\` is not part of the small-signal model: the row is judged without it`));
      }
      continue;
    }
    if (spec.open && rawValue.trim().toLowerCase() === 'open') {
      values[spec.key] = Infinity;
      shown.push(`${spec.key} open`);
      continue;
    }
    const q = parseQuantity(rawValue.trim(), spec.kind);
    if (!q.ok) {
      out.push(finding('wrong-unit', 'error', at, `condition \`${item}\`: ${q.message}`, q.hint ? [`write \`${q.hint}\``] : []));
      ok = false;
      continue;
    }
    if (spec.key === 'beta' && values.gain !== undefined && Math.abs(betaFromGain(values.gain) - q.quantity.value) > 0.02 * q.quantity.value) {
      out.push(finding('invalid-value', 'error', at, `\`${item}\` disagrees with the gain stated in the same cell, which means β = ${+betaFromGain(values.gain).toPrecision(4)}`));
      ok = false;
      continue;
    }
    values[spec.key] = q.quantity.value;
    shown.push(`${spec.key === 'beta' ? 'β' : spec.key} = ${q.quantity.written.text}`);
  }
  if (!ok) return null;
  return Object.keys(values).length ? { values, text: shown.join(', '), pos: cell.pos } : undefined;
}

function readBound(cell: Cell | undefined, unitCell: Cell | undefined, kind: Kind, key: string, out: Finding[]): QuantityAt | null | undefined {
  if (!cell || EMPTY.has(cell.text.toLowerCase())) return undefined;
  const unit = unitCell && !EMPTY.has(unitCell.text.toLowerCase()) ? unitCell.text : '';
  // The unit column applies to cells that carry only a number.
  // Only a short cell can be a bare number; the pattern is not run on long text.
  const bare = cell.text.length <= 40 && /^[+\-\u2212]?(\d+\.?\d*|\.\d+)([eE][+\-\u2212]?\d+)?$/.test(cell.text);
  const textWithUnit = bare && unit ? `${cell.text}${unit === '°' || unit === '%' ? '' : ' '}${unit}` : cell.text;
  const q = parseQuantity(textWithUnit, kind);
  if (!q.ok) {
    out.push(finding('wrong-unit', 'error', cell.pos, `\`${key}\` cell \`${cell.text}\`${bare && unit ? ` with unit \`${unit}\`` : ''}: ${q.message}`, q.hint ? [`write \`${q.hint}\``] : [], key));
    return null;
  }
  if ('refused' in cell.span) return { quantity: q.quantity, pos: cell.pos, unedited: cell.span.refused };
  return { quantity: q.quantity, pos: cell.pos, span: { start: cell.span.start, end: cell.span.end, ...(bare && unit ? { numberOnly: true } : {}) } };
}

export function readTables(tree: { children: MdNode[] }, topology: Topology, source: string): TableResult {
  const claims: ClaimEntry[] = [];
  const findings: Finding[] = [];
  // Iterative, in document order: a body may nest deeper than the call stack.
  const stack: MdNode[] = [...tree.children].reverse();
  while (stack.length) {
    const n = stack.pop()!;
    if (n.type === 'table') readTable(n, topology, claims, findings, source);
    else if (n.children) for (let i = n.children.length - 1; i >= 0; i--) stack.push(n.children[i]);
  }
  return { claims, findings };
}

function readTable(table: MdNode, topology: Topology, claims: ClaimEntry[], findings: Finding[], source: string): void {
  const rows = table.children ?? [];
  if (rows.length < 2) return;
  const header = (rows[0].children ?? []).map((c) => norm(text(c)));
  const col = (name: string) => header.indexOf(name);
  const iParam = col('parameter');
  const bounds = { min: col('min'), typ: col('typ'), max: col('max') };
  if (iParam < 0 || (bounds.min < 0 && bounds.typ < 0 && bounds.max < 0)) return; // not a datasheet table
  const iSymbol = col('symbol');
  const iCond = col('conditions') >= 0 ? col('conditions') : col('condition');
  const iUnit = col('unit') >= 0 ? col('unit') : col('units');
  const aliasNames = Object.entries(CLAIM_ALIASES).flatMap(([k, a]) => [k, ...a]);
  for (const row of rows.slice(1)) {
    const cells = row.children ?? [];
    const get = (i: number) => (i >= 0 ? cellOf(cells[i], source) : undefined);
    const name = get(iParam);
    if (!name || !name.text) continue;
    const symbol = get(iSymbol);
    const cond = iCond >= 0 ? get(iCond) : undefined;
    const statesGain = cond !== undefined && cond.text.split(/[,;]/).some((item) => {
      const at = item.indexOf('=');
      return at > 0 && matches(GAIN_NAMES, item.slice(0, at).trim());
    });
    const named = bandInName(name.text);
    const key = matchClaim(topology, symbol?.text, name.text, statesGain) ?? (named ? matchClaim(topology, symbol?.text, named.name, statesGain) : undefined);
    // A band in the name belongs to a settling row (`Settling time to 0.01 %`).
    const nameBand = named && key === 'settling_time' ? named.band : undefined;
    if (!key) {
      // Only a near miss of a long name suggests a misspelt claim; short symbols match too much.
      const near = nearest(name.text, aliasNames.filter((a) => a.length > 4));
      if (near && editDistance(norm(name.text), norm(near)) <= Math.max(1, Math.floor(norm(near).length / 5))) findings.push(finding('table', 'note', name.pos, `row \`${name.text}\` names no claim polecheck checks; did you mean \`${near}\`?`));
      continue;
    }
    const spec = topology.claims.find((c) => c.key === key)!;
    const rowFindings: Finding[] = [];
    const unit = get(iUnit);
    const entry: ClaimEntry = { key, keyPos: name.pos, spec, plain: false, source: 'table', label: name.text };
    let ok = true;
    for (const b of ['min', 'typ', 'max'] as const) {
      const q = readBound(get(bounds[b]), unit, spec.kind, key, rowFindings);
      if (q === null) ok = false;
      else if (q) entry[b] = q;
    }
    let conditions = cond ? readConditions(cond, topology, rowFindings) : undefined;
    if (nameBand && conditions !== null) {
      const band = parseQuantity(nameBand, 'ratio');
      if (band.ok && band.quantity.value > 0 && band.quantity.value < 0.5 && conditions?.values[SETTLING_BAND] === undefined) {
        conditions = { values: { ...conditions?.values, [SETTLING_BAND]: band.quantity.value }, text: [conditions?.text, `band ${band.quantity.written.text}`].filter(Boolean).join(', '), pos: conditions?.pos ?? name.pos };
      }
    }
    findings.push(...rowFindings);
    if (!ok || conditions === null) continue;
    if (!entry.min && !entry.typ && !entry.max) {
      findings.push(finding('table', 'note', name.pos, `row \`${name.text}\` gives no value in Min, Typ or Max`, [], key));
      continue;
    }
    if (entry.min && entry.max && entry.min.quantity.value > entry.max.quantity.value) {
      findings.push(finding('invalid-value', 'error', entry.min.pos, `row \`${name.text}\` has Min above Max`, [], key));
      continue;
    }
    if (conditions) entry.conditions = conditions;
    claims.push(entry);
  }
}
