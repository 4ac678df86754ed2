// Where a finding that is not about one written value should point.

import type { Pos } from '../spec/position';
import type { Spec } from '../spec/types';

/** The first of these claims the spec states, else the `params:` key. */
export function placeFor(spec: Spec, claims: string[]): { pos: Pos; claim: string | null } {
  for (const key of claims) {
    const c = spec.claims.find((e) => e.key === key);
    if (c) return { pos: c.keyPos, claim: c.key };
  }
  return { pos: spec.paramsPos, claim: null };
}

/** Whether the spec's topology is used in a feedback loop (it has a feedback factor). */
export const inLoop = (spec: Spec): boolean => spec.topology.conditions.some((c) => c.key === 'beta');
