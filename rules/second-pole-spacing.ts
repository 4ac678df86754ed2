import { formatQuantity } from '../src/quantity';
import { inLoop, placeFor } from '../src/verdicts/places';
import type { Rule } from '../src/verdicts/rule';

// Common practice (rule of thumb): with the second pole at 2.2× the loop
// crossover a two-pole loop keeps about 60° of phase margin (Allen & Holberg,
// "CMOS Analog Circuit Design", §6.2).
const rule: Rule = {
  id: 'second-pole-spacing',
  description: 'Common practice: the second pole sits at least 2.2× above the loop crossover frequency.',
  severity: 'warning',
  concerns: ['p2', 'phase_margin'],
  options: { ratio: 2.2 },
  check(ctx, options) {
    if (!inLoop(ctx.spec)) return [];
    const p2 = ctx.model.exact.p2?.value;
    const fc = ctx.model.loop.crossoversHz[0];
    if (!p2 || !fc || p2 >= options.ratio * fc) return [];
    const { pos } = placeFor(ctx.spec, ['p2', 'phase_margin', 'gbw']);
    return [{
      line: pos.line,
      column: pos.column,
      claim: null,
      computed: p2,
      unit: 'Hz',
      message: `second pole ${formatQuantity(p2, 'frequency')} is ${(p2 / fc).toPrecision(2)}× the loop crossover ${formatQuantity(fc, 'frequency')}; common practice keeps it above ${options.ratio}× (about 60° of phase margin in a two-pole loop)`,
      suggestions: [`move p2 above ${formatQuantity(options.ratio * fc, 'frequency')} (more gm2, less load) or lower the crossover (larger cc)`],
    }];
  },
};
export default rule;
