import { typicalValues } from '../src/model/evaluation';
import { byCodeUnit } from '../src/verdicts/findings';
import type { Draft, Rule } from '../src/verdicts/rule';
import type { ClaimEntry } from '../src/spec/types';
import { toleranceFor } from '../src/verdicts/verdict';

// The same claim at the same operating point, stated twice (front matter and
// a table, or two table rows), with values no figure can satisfy at once.
const rule: Rule = {
  id: 'conflicting-claims',
  description: 'The same claim stated twice at the same conditions with values that cannot both hold.',
  severity: 'error',
  concerns: ['claims'],
  options: {},
  check(ctx) {
    const typical = typicalValues(ctx.spec);
    const point = (c: ClaimEntry) => JSON.stringify(Object.entries({ ...typical, ...(c.conditions?.values ?? {}) }).sort(([a], [b]) => byCodeUnit(a, b)));
    // The values a figure may take for the claim to hold: typ ± tolerance, ≥ min, ≤ max.
    const interval = (c: ClaimEntry): [number, number] => {
      const t = toleranceFor(c.spec.kind, ctx.tolerances);
      let lo = -Infinity;
      let hi = Infinity;
      if (c.typ) {
        const v = c.typ.quantity.value;
        const d = t.relative ? Math.abs(v) * t.value : t.value;
        lo = Math.max(lo, v - d);
        hi = Math.min(hi, v + d);
      }
      if (c.min) lo = Math.max(lo, c.min.quantity.value);
      if (c.max) hi = Math.min(hi, c.max.quantity.value);
      return [lo, hi];
    };
    const where = (c: ClaimEntry) => (c.source === 'table' ? `the table row \`${c.label}\`` : 'the front matter');
    const stated = (c: ClaimEntry) => [c.typ && c.typ.quantity.written.text, c.min && `≥ ${c.min.quantity.written.text}`, c.max && `≤ ${c.max.quantity.written.text}`].filter(Boolean).join(', ');
    const out: Draft[] = [];
    // Group by claim and operating point first: only statements in one group can conflict.
    const groups = new Map<string, ClaimEntry[]>();
    for (const c of ctx.spec.claims) {
      const k = `${c.key}|${point(c)}`;
      const g = groups.get(k);
      if (g) g.push(c);
      else groups.set(k, [c]);
    }
    for (const claims of groups.values()) {
      // Each statement is reported once, against the first earlier one it contradicts.
      const bands = claims.map(interval);
      for (let j = 1; j < claims.length; j++) {
        const [blo, bhi] = bands[j];
        const i = bands.slice(0, j).findIndex(([alo, ahi]) => Math.max(alo, blo) > Math.min(ahi, bhi));
        if (i < 0) continue;
        const a = claims[i];
        const b = claims[j];
        const place = (c: ClaimEntry) => (c.source === 'table' ? (c.typ ?? c.min ?? c.max)!.pos : c.keyPos);
        const pos = place(b);
        const first = place(a);
        out.push({
          line: pos.line,
          column: pos.column,
          claim: b.key,
          message: `${b.key} is stated as ${stated(b)} in ${where(b)} and as ${stated(a)} in ${where(a)} (line ${first.line}) at the same conditions; both cannot hold`,
          suggestions: ['keep one statement, or give the table row the conditions it was measured at'],
          related: [{ line: first.line, column: first.column, message: `${b.key} stated as ${stated(a)} here` }],
        });
      }
    }
    return out;
  },
};
export default rule;
