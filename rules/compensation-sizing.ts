import { formatQuantity } from '../src/quantity';
import { placeFor } from '../src/verdicts/places';
import type { Draft, Rule } from '../src/verdicts/rule';

// Where a topology has a published sizing guide for its compensation (the
// Butterworth placement of a nested-Miller amplifier), a design far from it
// whose phase margin also falls short of common practice is worth a look.
const rule: Rule = {
  id: 'compensation-sizing',
  description: 'Warns when the compensation is far from the topology\'s published sizing guide and the phase margin suffers.',
  severity: 'warning',
  concerns: ['cc1', 'cc2', 'phase_margin'],
  options: { factor: 2, margin: 60 },
  check(ctx, options) {
    const guides = ctx.spec.topology.sizing?.(ctx.model.values) ?? [];
    const pm = ctx.model.exact.phase_margin?.value;
    if (!guides.length || pm === null || pm === undefined || pm >= options.margin) return [];
    const out: Draft[] = [];
    for (const guide of guides) {
      const far = Object.entries(guide.changes).filter(([k, v]) => {
        const now = ctx.model.values[k];
        return now !== undefined && Math.max(now / v, v / now) > options.factor;
      });
      if (!far.length) continue;
      const at = ctx.spec.params.get(far[0][0]);
      const { pos } = at ? { pos: at.typ.pos } : placeFor(ctx.spec, ['phase_margin']);
      const guided = ctx.withChanges(guide.changes);
      const kindOf = (k: string) => ctx.spec.topology.params.find((p) => p.key === k)?.kind ?? 'capacitance';
      const text = Object.entries(guide.changes).map(([k, v]) => `${k} = ${formatQuantity(v, kindOf(k))}`).join(', ');
      const gives = guided?.exact.phase_margin?.value;
      out.push({
        line: pos.line,
        column: pos.column,
        claim: null,
        computed: pm,
        unit: 'deg',
        message: `phase margin ${formatQuantity(pm, 'angle')} is below the ${options.margin}° of common practice, and ${far.map(([k]) => `${k} = ${formatQuantity(ctx.model.values[k], kindOf(k))}`).join(', ')} is more than ${options.factor}× from ${guide.why}`,
        suggestions: [`${text}${gives !== undefined && gives !== null ? ` gives a phase margin of ${formatQuantity(gives, 'angle')}` : ''}`],
      });
    }
    return out;
  },
};
export default rule;
