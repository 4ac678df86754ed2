// The shape shared by every rule that checks one claim against the exact
// model: typical values at the typical point, min/max bounds at the worst
// corner of any ranges, with the tolerance of the claim's kind.

import { conditionsText } from '../model/evaluation';
import type { Figure } from '../engine/figure';
import type { ClaimVerdict, Fix } from './findings';
import { designChanges, renderFixes, restate } from '../fixes/design';
import { loopVerdict } from './points';
import { worstCase } from '../model/worst-case';
import type { Draft, Rule, RuleContext } from './rule';
import { CANONICAL_UNIT } from '../quantity';
import type { ClaimEntry } from '../spec/types';
import type { Values } from '../topologies/types';
import { type BoundVerdict, boundSymbol, describeTolerance, judge, offBy, show, toleranceFor } from './verdict';

export interface ClaimRuleSpec {
  id: string;
  claim: string;
  /** Name of the figure in messages: "phase margin". */
  noun: string;
  description: string;
}

interface Point {
  label: string;
  where: string;
  figure: Figure | undefined;
  value: number | null;
}

function pointsOf(ctx: RuleContext, claim: string): Point[] {
  return ctx.evaluated.map((e) => ({
    label: e.corner.label,
    where: conditionsText(ctx.spec, e.corner.values),
    figure: e.model?.exact[claim],
    value: e.model?.exact[claim]?.value ?? null,
  }));
}

export function claimRule(def: ClaimRuleSpec): Rule {
  return {
    id: def.id,
    description: def.description,
    severity: 'error',
    concerns: [def.claim],
    options: {},
    scope: 'claims',
    check(ctx) {
      const out: Draft[] = [];
      for (const entry of ctx.spec.claims.filter((c) => c.key === def.claim)) out.push(...checkEntry(ctx, def, entry));
      return out;
    },
  };
}

function checkEntry(ctx: RuleContext, def: ClaimRuleSpec, entry: ClaimEntry): Draft[] {
  const kind = entry.spec.kind;
  const t = toleranceFor(kind, ctx.tolerances);
  const points = pointsOf(ctx, def.claim);
  const typical = points[0];
  const drafts: Draft[] = [];
  const verdicts: Array<{ v: BoundVerdict; at: Point; values: Values; stability: ClaimVerdict['stability'] }> = [];
  const typModel = ctx.model;
  if (entry.typ) verdicts.push(...judge({ ...entry, min: undefined, max: undefined }, typical.value, typical.figure, t).map((v) => ({ v, at: typical, values: typModel.values, stability: loopVerdict(ctx.spec, typModel) })));
  for (const bound of ['min', 'max'] as const) {
    if (!entry[bound]) continue;
    const w = worstCase(ctx, def.claim, bound);
    const at: Point = { label: w.label, where: conditionsText(ctx.spec, w.values), figure: w.figure, value: w.value };
    const only = { ...entry, typ: undefined, min: bound === 'min' ? entry.min : undefined, max: bound === 'max' ? entry.max : undefined };
    const worstModel = ctx.withChanges(w.values);
    const stability: ClaimVerdict['stability'] = worstModel ? loopVerdict(ctx.spec, worstModel) : 'unknown';
    verdicts.push(...judge(only, at.value, at.figure, t).map((v) => ({ v, at, values: w.values, stability })));
  }
  const claimed = {
    ...(entry.typ ? { typ: entry.typ.quantity.value } : {}),
    ...(entry.min ? { min: entry.min.quantity.value } : {}),
    ...(entry.max ? { max: entry.max.quantity.value } : {}),
  };
  const unit = CANONICAL_UNIT[kind];
  for (const { v, at, values, stability } of verdicts) {
    if (v.outcome === 'holds') continue;
    // SPEC-FORMAT §4: a claim's finding points at its key (front matter) or its cell (table).
    const pos = entry.source === 'table' ? entry[v.bound]!.pos : entry.keyPos;
    const written = entry[v.bound]!.quantity.written.text;
    // A vertex is named by its ends ("gm1 min, cl max"); a point inside the box by its values.
    const corner = at.label === 'typical' ? ` at ${at.where}` : at.label.includes(' = ') ? ` at ${at.label} (${at.where})` : ` at the corner ${at.label} (${at.where})`;
    const claimText = `${def.noun} claimed ${boundSymbol[v.bound]}${written}`;
    let message: string;
    if (at.value === null) {
      message = `${claimText}, but the model gives no ${def.noun}${corner}: ${at.figure?.reason ?? 'the figure does not exist'}`;
    } else if (v.outcome === 'thin') {
      message = `${claimText} holds${corner} with the model giving ${show(at.value, kind)}, ${offBy(v, at.value, kind, t)} (tolerance ${describeTolerance(t, kind)})`;
    } else {
      const tol = v.bound === 'typ' ? `, tolerance ${describeTolerance(t, kind)}` : '';
      message = `${claimText}, model gives ${show(at.value, kind)}${corner} (${offBy(v, at.value, kind, t)}${tol})`;
    }
    const notes = at.figure?.notes ?? [];
    if (notes.length) message += `; ${notes.join('; ')}`;
    // A forgotten load is the commonest silent assumption: say it was made.
    const loadStated = ctx.spec.conditions.has('cl') || (entry.conditions !== undefined && 'cl' in entry.conditions.values);
    if (!loadStated && entry.key !== 'dc_gain' && ctx.spec.topology.conditions.some((c) => c.key === 'cl')) message += '; this assumes no load capacitance: the document states no cl';
    const design = v.outcome === 'fails' ? designChanges(ctx, entry, v, values) : [];
    const fixes: Fix[] = v.outcome === 'fails'
      ? [...(at.value !== null ? [restate(ctx, entry, v, at.value, at.where)] : []), ...(Array.isArray(design) ? design : [])]
      : [];
    drafts.push({
      line: pos.line,
      column: pos.column,
      claim: entry.key,
      claimed,
      computed: at.value,
      unit,
      message,
      suggestions: Array.isArray(design) ? renderFixes(fixes) : [...renderFixes(fixes), design.notSearched],
      ...(fixes.length ? { fixes } : {}),
      verdict: {
        bound: v.bound,
        outcome: v.outcome,
        stated: v.claimed,
        computed: at.value,
        deviation: at.value === null ? null : at.value - v.claimed,
        tolerance: { value: t.value, relative: t.relative },
        at: { label: at.label, conditions: at.where, values: { ...values } },
        stability,
      },
      ...(v.outcome === 'thin' ? { severity: 'warning' as const } : {}),
      ...(at.figure ? { derivation: { method: at.figure.method, how: at.figure.how, ...(at.figure.notes?.length ? { notes: at.figure.notes } : {}) } } : {}),
    });
  }
  return drafts;
}
