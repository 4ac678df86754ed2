import { formatQuantity } from '../src/quantity';
import { inLoop, placeFor } from '../src/verdicts/places';
import type { Rule } from '../src/verdicts/rule';

// Common practice (rule of thumb): a right-half-plane zero ten times above the
// crossover costs under 6° of phase (atan(1/10) ≈ 5.7°); Allen & Holberg,
// "CMOS Analog Circuit Design", §6.2.
const rule: Rule = {
  id: 'rhp-zero-spacing',
  description: 'Common practice: a right-half-plane zero sits at least 10× above the loop crossover frequency.',
  severity: 'warning',
  concerns: ['rhp_zero', 'phase_margin'],
  options: { ratio: 10 },
  check(ctx, options) {
    if (!inLoop(ctx.spec)) return [];
    const z = ctx.model.exact.rhp_zero?.value;
    const fc = ctx.model.loop.crossoversHz[0];
    if (!z || !fc || z >= options.ratio * fc) return [];
    const { pos } = placeFor(ctx.spec, ['rhp_zero', 'phase_margin', 'gbw']);
    const lag = (Math.atan(fc / z) * 180) / Math.PI;
    return [{
      line: pos.line,
      column: pos.column,
      claim: null,
      computed: z,
      unit: 'Hz',
      message: `right-half-plane zero ${formatQuantity(z, 'frequency')} is only ${(z / fc).toPrecision(2)}× the loop crossover ${formatQuantity(fc, 'frequency')} and costs about ${lag.toFixed(1)}° of phase; common practice keeps it above ${options.ratio}×`,
      suggestions: ['a nulling resistor in series with the compensation capacitor moves the zero (see the phase-margin suggestions for values)'],
    }];
  },
};
export default rule;
