import { formatQuantity } from '../src/quantity';
import type { Draft, Rule } from '../src/verdicts/rule';
import { holdsAll, judge, percent, toleranceFor } from '../src/verdicts/verdict';

// When the first-order formulas are off, a document whose numbers agree with
// them rather than with the exact model was most likely computed by hand.
const rule: Rule = {
  id: 'hand-estimate-drift',
  description: 'Warns when a claim matches the hand estimate while the hand estimate is more than 10 % off the exact figure.',
  severity: 'warning',
  concerns: ['dc_gain', 'gbw', 'p1', 'p2', 'rhp_zero', 'phase_margin'],
  options: { drift: 0.1 },
  scope: 'claims',
  check(ctx, options) {
    const out: Draft[] = [];
    for (const entry of ctx.spec.claims) {
      if (!entry.typ) continue;
      const hand = ctx.model.hand[entry.key];
      const exact = ctx.model.exact[entry.key];
      if (!hand || hand.value === null || !exact || exact.value === null) continue;
      const kind = entry.spec.kind;
      const t = toleranceFor(kind, ctx.tolerances);
      // Drift in the claim's own terms: relative for frequencies, absolute beyond the tolerance for dB and degrees.
      const drift = t.relative ? Math.abs(hand.value - exact.value) / Math.abs(exact.value) : Math.abs(hand.value - exact.value) / t.value / 10;
      if (drift <= options.drift) continue;
      const typOnly = { ...entry, min: undefined, max: undefined };
      if (!holdsAll(judge(typOnly, hand.value, hand, t)) || holdsAll(judge(typOnly, exact.value, exact, t))) continue;
      const off = t.relative ? `${percent(100 * drift)} % off` : `${formatQuantity(Math.abs(hand.value - exact.value), kind, 2)} off`;
      const caveats = ctx.model.caveats.length ? ` (${ctx.model.caveats.join('; ')})` : '';
      out.push({
        line: (entry.source === 'table' ? entry.typ.pos : entry.keyPos).line,
        column: (entry.source === 'table' ? entry.typ.pos : entry.keyPos).column,
        claim: entry.key,
        computed: exact.value,
        unit: kind === 'angle' ? 'deg' : kind === 'gain' ? 'dB' : 'Hz',
        message: `${entry.key} ${entry.typ.quantity.written.text} matches the hand estimate ${formatQuantity(hand.value, kind)} (${hand.how}), which is ${off} the exact ${formatQuantity(exact.value, kind)}${caveats}`,
        suggestions: [`state the exact figure, ${formatQuantity(exact.value, kind)}, or say in the text that the figure is a first-order estimate`],
        derivation: { method: hand.method, how: hand.how },
      });
    }
    return out;
  },
};
export default rule;
