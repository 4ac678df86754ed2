// The rule contract and the wrapper that runs rules: the wrapper stamps the
// rule id, owns severity and configuration; rule bodies only return drafts.

import type { Evaluated } from '../model/evaluation';
import type { Finding, Severity } from './findings';
import type { Model } from '../model/model';
import type { Judged } from './points';
import type { Spec } from '../spec/types';
import type { Values } from '../topologies/types';
import type { Tolerances } from './verdict';

export interface RuleContext {
  spec: Spec;
  /** The model at the typical point. */
  model: Model;
  /** Every evaluated point: the typical one first, then the corners of the ranges. */
  evaluated: Evaluated[];
  /** The corners were taken one key at a time rather than every vertex. */
  cornersLimited: boolean;
  tolerances: Tolerances;
  /** The typical point with some values changed, re-evaluated; null when the network cannot be solved. */
  withChanges(changes: Values): Model | null;
  /** The whole spec (every operating point, bounds at their worst case) judged again with params changed; memoized per file. */
  recheck?(changes: Values): Recheck;
  /**
   * The file's budget of design-change searches (shared by its operating
   * points): each failing statement of a new kind spends one; once spent,
   * failing statements get their restatement only, and say so.
   */
  designBudget?: { left: number; until: number };
}

export interface Recheck {
  judged: Judged[];
  /** The closed loop is stable at every operating point and at the worst points of the bounds. */
  stable: boolean;
  /** The model at the front matter's typical point with the change. */
  front: Model | null;
}

export type Draft = Omit<Finding, 'rule' | 'severity' | 'suggestions'> & { severity?: Severity; suggestions?: string[] };

export type RuleOptions = Record<string, number>;

export interface Rule {
  id: string;
  /** One line: what the rule checks. */
  description: string;
  severity: Severity;
  /** The claims (or params) the rule is about. */
  concerns: string[];
  /** Options with their defaults. */
  options: RuleOptions;
  /**
   * `claims`: judges claims one by one, and runs once per operating point
   * (the front matter's, and each table row's own conditions), seeing only the
   * claims made there. `design` (default): runs once, on the whole spec at
   * the front matter's operating point.
   */
  scope?: 'claims' | 'design';
  check(ctx: RuleContext, options: RuleOptions): Draft[];
}

export interface RuleSettings {
  level?: Severity | 'none';
  options?: RuleOptions;
}

export function runRules(rules: readonly Rule[], ctx: RuleContext, settings: Record<string, RuleSettings> = {}): Finding[] {
  const out: Finding[] = [];
  for (const rule of rules) {
    const s = settings[rule.id] ?? {};
    if (s.level === 'none') continue;
    const options = { ...rule.options, ...s.options };
    for (const d of rule.check(ctx, options)) {
      // A configured severity replaces the rule's default; a draft that sets
      // its own (a thin margin is a warning from an error rule) keeps it.
      const severity = d.severity ?? s.level ?? rule.severity;
      out.push({ ...d, rule: rule.id, severity, suggestions: d.suggestions ?? [] });
    }
  }
  return out;
}
