// The project's configuration file, polecheck.yaml: rule severities and
// options, tolerances per quantity kind, include/exclude globs. Found by
// walking up from the working directory to the repository root.

import { existsSync, readFileSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import { RULES } from '../rules';
import type { Severity } from './verdicts/findings';
import { parseQuantity } from './quantity';
import type { RuleSettings } from './verdicts/rule';
import { nearest } from './spec/nearest';
import { LineIndex, type Pos } from './spec/position';
import { type YEntry, type YNode, parseYaml } from './spec/yaml';
import { DEFAULT_TOLERANCES, type Tolerances } from './verdicts/verdict';

export const CONFIG_NAME = 'polecheck.yaml';
export const CONFIG_KEYS = ['rules', 'tolerances', 'include', 'exclude'] as const;
const SEVERITIES = ['none', 'note', 'warning', 'error'] as const;
const TOLERANCE_KINDS = ['frequency', 'slew', 'gain', 'angle'] as const;

export interface Config {
  /** The file it came from, or undefined for the defaults. */
  path?: string;
  /** Globs are relative to this folder. */
  baseDir: string;
  rules: Record<string, RuleSettings>;
  tolerances: Tolerances;
  include: string[];
  exclude: string[];
}

export class ConfigError extends Error {
  constructor(
    readonly path: string,
    readonly pos: Pos,
    message: string,
  ) {
    super(`${path}:${pos.line}:${pos.column}: ${message}`);
  }
}

export const defaultConfig = (cwd: string): Config => ({
  baseDir: cwd,
  rules: {},
  tolerances: DEFAULT_TOLERANCES,
  include: [],
  exclude: [],
});

/** polecheck.yaml in `cwd` or the nearest folder above it, stopping at the repository root. */
export function findConfig(cwd: string): string | undefined {
  let dir = resolve(cwd);
  for (;;) {
    const candidate = join(dir, CONFIG_NAME);
    if (existsSync(candidate)) return candidate;
    if (existsSync(join(dir, '.git'))) return undefined;
    const up = dirname(dir);
    if (up === dir) return undefined;
    dir = up;
  }
}

const scalar = (n: YNode): string | undefined => (n.kind === 'scalar' ? n.text.trim() : undefined);

function globs(path: string, e: YEntry): string[] {
  const v = e.value;
  const list = v.kind === 'seq' ? v.items : v.kind === 'scalar' ? [v] : [];
  if (v.kind === 'map' || list.some((i) => i.kind !== 'scalar')) throw new ConfigError(path, v.pos, `\`${e.key}\` takes a glob or a list of globs, e.g. \`[specs/**/*.md]\``);
  return list.map((i) => (i as { text: string }).text);
}

function ruleSettings(path: string, e: YEntry): RuleSettings {
  const rule = RULES.find((r) => r.id === e.key);
  if (!rule) {
    const near = nearest(e.key, RULES.map((r) => r.id));
    throw new ConfigError(path, e.keyPos, `unknown rule \`${e.key}\`${near ? `; did you mean \`${near}\`?` : ''} ('polecheck rules' lists them)`);
  }
  const sev = (n: YNode): Severity | 'none' => {
    const s = scalar(n);
    if (!s || !(SEVERITIES as readonly string[]).includes(s)) throw new ConfigError(path, n.pos, `the level of \`${e.key}\` is one of ${SEVERITIES.join(', ')}`);
    return s as Severity | 'none';
  };
  if (e.value.kind === 'scalar') return { level: sev(e.value) };
  if (e.value.kind !== 'map') throw new ConfigError(path, e.value.pos, `\`${e.key}\` takes a level or a mapping of \`level\` and options`);
  const out: RuleSettings = {};
  for (const o of e.value.entries) {
    if (o.key === 'level') {
      out.level = sev(o.value);
      continue;
    }
    if (!(o.key in rule.options)) {
      const names = Object.keys(rule.options);
      throw new ConfigError(path, o.keyPos, `\`${e.key}\` has no option \`${o.key}\`${names.length ? `; its options: ${names.join(', ')}` : '; it takes no options'}`);
    }
    const n = Number(scalar(o.value));
    if (!Number.isFinite(n)) throw new ConfigError(path, o.value.pos, `option \`${o.key}\` of \`${e.key}\` takes a number`);
    out.options = { ...out.options, [o.key]: n };
  }
  return out;
}

function tolerances(path: string, e: YEntry): Tolerances {
  if (e.value.kind !== 'map') throw new ConfigError(path, e.value.pos, '`tolerances` is a mapping such as `{frequency: 5%, gain: 0.5 dB, angle: 2 deg}`');
  const out: Tolerances = { ...DEFAULT_TOLERANCES };
  for (const t of e.value.entries) {
    if (!(TOLERANCE_KINDS as readonly string[]).includes(t.key)) {
      const near = nearest(t.key, TOLERANCE_KINDS);
      throw new ConfigError(path, t.keyPos, `unknown tolerance \`${t.key}\`${near ? `; did you mean \`${near}\`?` : ''}; one of ${TOLERANCE_KINDS.join(', ')}`);
    }
    const text = scalar(t.value) ?? '';
    const kind = t.key as (typeof TOLERANCE_KINDS)[number];
    // Frequencies and rates take a relative tolerance, gains and angles an absolute one.
    const q = parseQuantity(text, kind === 'frequency' || kind === 'slew' ? 'ratio' : kind);
    if (!q.ok || !(q.quantity.value > 0) || ((kind === 'frequency' || kind === 'slew') && q.quantity.written.style !== 'percent')) {
      const example = kind === 'gain' ? '0.5 dB' : kind === 'angle' ? '2 deg' : '5%';
      throw new ConfigError(path, t.value.pos, `tolerance \`${t.key}\` takes a positive ${kind === 'gain' ? 'gain in dB' : kind === 'angle' ? 'angle' : 'percentage'}, e.g. \`${example}\``);
    }
    out[kind] = { value: q.quantity.value, relative: kind === 'frequency' || kind === 'slew' };
  }
  return out;
}

export function parseConfig(path: string, text: string): Config {
  const index = new LineIndex(text);
  const parsed = parseYaml(text.charCodeAt(0) === 0xfeff ? text.slice(1) : text, (o) => index.pos(o));
  if (!parsed.ok) throw new ConfigError(path, parsed.error.pos, parsed.error.message);
  const config = defaultConfig(dirname(resolve(path)));
  config.path = path;
  const root = parsed.root;
  if (!root) return config;
  if (root.kind !== 'map') throw new ConfigError(path, root.pos, `${CONFIG_NAME} is a mapping with keys ${CONFIG_KEYS.join(', ')}`);
  for (const e of root.entries) {
    switch (e.key) {
      case 'rules':
        if (e.value.kind !== 'map') throw new ConfigError(path, e.value.pos, '`rules` maps rule ids to a level (none, note, warning, error) or to `{level, options…}`');
        for (const r of e.value.entries) config.rules[r.key] = ruleSettings(path, r);
        break;
      case 'tolerances':
        config.tolerances = tolerances(path, e);
        break;
      case 'include':
        config.include = globs(path, e);
        break;
      case 'exclude':
        config.exclude = globs(path, e);
        break;
      default: {
        const near = nearest(e.key, CONFIG_KEYS);
        throw new ConfigError(path, e.keyPos, `unknown key \`${e.key}\`${near ? `; did you mean \`${near}\`?` : ''}; ${CONFIG_NAME} takes ${CONFIG_KEYS.join(', ')}`);
      }
    }
  }
  return config;
}

export function loadConfig(path: string): Config {
  let text: string;
  try {
    text = readFileSync(path, 'utf8');
  } catch (err) {
    throw new ConfigError(path, { line: 1, column: 1, offset: 0 }, `cannot read the configuration: ${(err as NodeJS.ErrnoException).code ?? (err as Error).message}`);
  }
  return parseConfig(path, text);
}
