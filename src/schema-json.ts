// The JSON Schema (draft-07) of the front matter, generated from the same
// topology definitions and unit table the reader validates against, so the
// two cannot drift. For editors that read a `# yaml-language-server: $schema=`
// modeline, and for other tools.

import { type Kind, UNITS } from './quantity';
import { RULES } from '../rules';
import { FORMAT_VERSION, TOP_KEYS } from './spec/schema';
import { TOPOLOGIES } from './topologies';
import { networkTopology } from './topologies/network';
import type { ClaimSpec, KeySpec, Topology } from './topologies/types';

type Schema = Record<string, unknown>;

const escape = (s: string): string => s.replace(/[.*+?^${}()|[\]\\/]/g, '\\$&');

const NUMBER = '[+\\-\\u2212]?(?:\\d+(?:\\.\\d*)?|\\.\\d+)(?:[eE][+\\-\\u2212]?\\d+)?';

/** A written quantity of one kind: number, optional space, one of the accepted unit spellings. */
function quantityPattern(kind: Kind): string {
  const units = [...UNITS].filter(([, d]) => d.kind === kind).map(([k]) => k).sort((a, b) => b.length - a.length);
  const unit = units.length ? `\\s*(?:${units.map(escape).join('|')})` : '';
  return kind === 'ratio' ? `^\\s*${NUMBER}\\s*%?\\s*$` : `^\\s*${NUMBER}${unit}\\s*$`;
}

const kindDefs = (): Schema => {
  const defs: Schema = {};
  for (const kind of new Set([...UNITS.values()].map((d) => d.kind).concat(['ratio']))) {
    defs[kind] = { type: 'string', pattern: quantityPattern(kind as Kind), description: `a ${kind} as written in a spec` };
    defs[`${kind}-range`] = {
      anyOf: [
        { $ref: `#/definitions/${kind}` },
        { type: 'string', pattern: quantityPattern(kind as Kind).replace(/\\s\*\$$/, `\\s*(?:±|\\+/-)\\s*${NUMBER}\\s*%\\s*$`) },
        {
          type: 'object',
          // `from`: the simulator vectors `polecheck sync` takes the value from.
          properties: { min: { $ref: `#/definitions/${kind}` }, typ: { $ref: `#/definitions/${kind}` }, max: { $ref: `#/definitions/${kind}` }, from: { $ref: '#/definitions/from' } },
          additionalProperties: false,
          minProperties: 1,
        },
      ],
    };
  }
  // A value written as an expression (src/spec/expressions.ts): an operator, a parenthesis, ∥, or a bare name.
  defs.expression = {
    type: 'string',
    description: 'an expression over numbers with units, design quantities, params and conditions: + − * / ^, parentheses, sqrt, min, max, abs, and ∥ (or ||) for the parallel combination, e.g. `2 * i1 / vov1`, `ro2 ∥ ro4`',
    anyOf: [{ pattern: '[*/^()+\u2225|\u00b7\u00d7]|\\S\\s*[-\u2212]' }, { pattern: '^\\s*[A-Za-z_][A-Za-z0-9_]*\\s*$' }],
  };
  defs.from = { type: 'string', minLength: 1, description: 'ngspice vectors of an operating point the value is imported from by `polecheck sync`, or an expression over them: `@m1[gm]`, `@m6[cgs] + @m2[cgd]`' };
  return defs;
};

/** `design:` — named quantities with units, ranges, expressions over each other, or a `from` for `polecheck sync`. */
const DESIGN: Schema = {
  type: 'object',
  description: 'design quantities: named values with units (`i1: 20 µA ±10%`, `vov1: 150 mV`, `gm_id1: 16 /V`) that params, conditions and other design quantities may use in expressions; one named like a param or condition stands for it',
  propertyNames: { pattern: '^[A-Za-z_][A-Za-z0-9_]*$', not: { enum: [...UNITS.keys(), 'rad', 'sqrt', 'min', 'max', 'abs'] } },
  additionalProperties: {
    anyOf: [
      { type: 'string', minLength: 1 },
      { type: 'number' },
      { type: 'object', properties: { min: { type: 'string' }, typ: { type: 'string' }, max: { type: 'string' }, from: { $ref: '#/definitions/from' } }, additionalProperties: false, minProperties: 1 },
    ],
  },
};

function valueSchema(k: KeySpec): Schema {
  // The closed-loop gain: one signed value, bare, in V/V or in dB (spec/closed-loop-conditions.ts).
  if (k.key === 'gain') return { description: k.description, anyOf: [{ type: 'number', not: { const: 0 } }, { type: 'string', pattern: `^\\s*${NUMBER}\\s*(?:V/V|dB)?\\s*$` }] };
  const forms: Schema[] = [{ $ref: `#/definitions/${k.kind}-range` }];
  if (k.key === 'step') forms.push({ type: 'object', properties: { input: { $ref: '#/definitions/voltage' }, output: { $ref: '#/definitions/voltage' } }, additionalProperties: false, minProperties: 1, maxProperties: 1 });
  if (k.kind === 'ratio') forms.push({ type: 'number', exclusiveMinimum: 0, ...(k.max !== undefined ? { maximum: k.max } : {}) });
  if (k.allowZero) forms.push({ const: 0 }, { const: '0' });
  if (k.open) forms.push({ const: 'open' });
  if (!['gain', 'angle', 'temperature', 'fom'].includes(k.kind) && k.key !== 'step') forms.push({ $ref: '#/definitions/expression' });
  return { description: k.description, anyOf: forms };
}

const bounds = (kind: Kind, claim?: ClaimSpec): Schema => ({
  anyOf: [
    { $ref: `#/definitions/${kind}` },
    {
      type: 'object',
      properties: {
        min: { $ref: `#/definitions/${kind}` },
        typ: { $ref: `#/definitions/${kind}` },
        max: { $ref: `#/definitions/${kind}` },
        // A claim's own arguments (`at: 1 MHz`, `band: [10 Hz, 1 MHz]`).
        ...Object.fromEntries((claim?.args ?? []).map((a) => [
          a.key,
          a.valueKeys.length === 1
            ? { description: a.description, $ref: `#/definitions/${a.kind}` }
            : { description: a.description, type: 'array', items: { $ref: `#/definitions/${a.kind}` }, minItems: 2, maxItems: 2 },
        ])),
      },
      additionalProperties: false,
      minProperties: 1,
    },
  ],
});

function section(keys: KeySpec[], required: boolean): Schema {
  return {
    type: 'object',
    properties: Object.fromEntries(keys.map((k) => [k.key, valueSchema(k)])),
    additionalProperties: false,
    ...(required ? { required: keys.filter((k) => k.required).map((k) => k.key) } : {}),
  };
}

function topologyBranch(t: Topology): Schema {
  return {
    if: { properties: { topology: { const: t.id } }, required: ['topology'] },
    then: {
      properties: {
        params: section(t.params, true),
        conditions: section(t.conditions, false),
        claims: { type: 'object', properties: Object.fromEntries(t.claims.map((c) => [c.key, { description: c.description, ...bounds(c.kind, c) }])), additionalProperties: false },
        network: false,
      },
      required: ['params'],
    },
  };
}

// Node names; YAML reads a bare `0` (ground) as a number.
const NODE = { anyOf: [{ type: 'string', minLength: 1 }, { const: 0 }] };

function networkBranch(): Schema {
  const pair = { type: 'array', items: NODE, minItems: 2, maxItems: 2 };
  const value = (kind: Kind) => ({ $ref: `#/definitions/${kind}-range` });
  const element = {
    oneOf: [
      { type: 'object', properties: { kind: { const: 'resistor' }, between: pair, value: value('resistance'), noise: { enum: ['thermal', 'none'] } }, required: ['kind', 'between', 'value'], additionalProperties: false },
      { type: 'object', properties: { kind: { const: 'capacitor' }, between: pair, value: value('capacitance') }, required: ['kind', 'between', 'value'], additionalProperties: false },
      {
        type: 'object',
        properties: { kind: { const: 'transconductance' }, into: NODE, from: NODE, control: pair, value: value('conductance'), noise: { enum: ['none', 'channel'] }, gamma: { anyOf: [{ type: 'number', exclusiveMinimum: 0 }, { $ref: '#/definitions/ratio' }] } },
        required: ['kind', 'into', 'control', 'value'],
        additionalProperties: false,
      },
    ],
  };
  // Keys and claims of any user-defined network (they do not depend on its elements).
  const net = networkTopology({ input: 'in', output: 'out', nodes: ['in', 'out'], elements: [] });
  return {
    if: { properties: { topology: { const: 'network' } }, required: ['topology'] },
    then: {
      properties: {
        network: {
          type: 'object',
          properties: { input: NODE, output: NODE, nodes: { type: 'array', items: NODE, minItems: 1 }, elements: { type: 'object', additionalProperties: element, minProperties: 1 } },
          required: ['input', 'output', 'nodes', 'elements'],
          additionalProperties: false,
        },
        params: false,
        conditions: section(net.conditions, false),
        claims: {
          type: 'object',
          properties: Object.fromEntries(net.claims.map((c) => [c.key, { description: c.description, ...bounds(c.kind, c) }])),
          additionalProperties: false,
        },
      },
      required: ['network'],
    },
  };
}

export function jsonSchema(): Schema {
  return {
    $schema: 'http://json-schema.org/draft-07/schema#',
    $id: `urn:polecheck:spec-format:${FORMAT_VERSION}`,
    title: 'polecheck spec front matter',
    description: `Front matter of an analog block spec, format version ${FORMAT_VERSION}. Generated by \`polecheck schema\` from the definitions polecheck itself validates against.`,
    type: 'object',
    required: ['polecheck', 'topology'],
    properties: {
      polecheck: { const: FORMAT_VERSION },
      block: { type: 'string' },
      title: { type: 'string' },
      topology: { enum: [...TOPOLOGIES.map((t) => t.id), 'network'] },
      network: { type: 'object' },
      design: DESIGN,
      params: { type: 'object' },
      conditions: { type: 'object' },
      claims: { type: 'object' },
      waivers: {
        type: 'array',
        items: {
          type: 'object',
          properties: { rule: { type: 'string' }, claim: { type: 'string' }, reason: { type: 'string', minLength: 1 }, expires: { type: 'string', pattern: '^\\d{4}-\\d{2}-\\d{2}$' } },
          required: ['rule', 'reason'],
          additionalProperties: false,
        },
      },
    },
    additionalProperties: false,
    propertyNames: { enum: [...TOP_KEYS] },
    allOf: [...TOPOLOGIES.map(topologyBranch), networkBranch()],
    definitions: kindDefs(),
  };
}

/** The JSON Schema of polecheck.yaml, from the rule registry and the tolerance kinds the reader accepts. */
export function configSchema(): Schema {
  const level = { enum: ['none', 'note', 'warning', 'error'], description: 'SARIF level: none turns the rule off' };
  const rules = Object.fromEntries(
    RULES.map((r) => [
      r.id,
      {
        description: r.description,
        anyOf: [
          level,
          {
            type: 'object',
            properties: { level, ...Object.fromEntries(Object.keys(r.options).map((o) => [o, { type: 'number' }])) },
            additionalProperties: false,
          },
        ],
      },
    ]),
  );
  const percent = { type: 'string', pattern: `^\\s*${NUMBER}\\s*%\\s*$` };
  const globs = { anyOf: [{ type: 'string' }, { type: 'array', items: { type: 'string' } }] };
  return {
    $schema: 'http://json-schema.org/draft-07/schema#',
    $id: 'urn:polecheck:config',
    title: 'polecheck.yaml',
    type: 'object',
    properties: {
      rules: { type: 'object', properties: rules, additionalProperties: false },
      tolerances: {
        type: 'object',
        properties: {
          frequency: percent,
          slew: percent,
          gain: { type: 'string', pattern: `^\\s*${NUMBER}\\s*dB\\s*$` },
          angle: { type: 'string', pattern: quantityPattern('angle') },
        },
        additionalProperties: false,
      },
      include: globs,
      exclude: globs,
    },
    additionalProperties: false,
  };
}
