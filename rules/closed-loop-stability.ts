import { formatQuantity } from '../src/quantity';
import { inLoop } from '../src/verdicts/places';
import type { Rule } from '../src/verdicts/rule';

// The loop's stability, decided from the closed-loop poles (the roots of
// 1 + β·A(s)), at each operating point: the front matter's and every table
// row's own conditions. A margin read off the open loop says nothing when the
// closed loop is unstable, so this is said once, plainly, whatever is claimed.
const rule: Rule = {
  id: 'closed-loop-stability',
  description: 'The closed loop A/(1 + βA) must be stable at every operating point the spec states.',
  severity: 'error',
  concerns: ['beta', 'phase_margin', 'gain_margin'],
  options: {},
  scope: 'claims',
  check(ctx) {
    if (!inLoop(ctx.spec)) return [];
    const loop = ctx.model.loop;
    if (loop.stability === 'stable') return [];
    // At the conditions of this point: a table row's Conditions cell, else `beta`, else the topology.
    const row = ctx.spec.claims.find((c) => c.conditions);
    const pos = row?.conditions?.pos ?? ctx.spec.conditions.get('beta')?.keyPos ?? ctx.spec.topologyPos;
    const where = Object.keys(ctx.model.values).length ? ` at β = ${+ctx.model.beta.toPrecision(3)}${ctx.model.values.cl !== undefined ? `, cl = ${formatQuantity(ctx.model.values.cl, 'capacitance')}` : ''}` : '';
    if (loop.stability === 'unknown') {
      return [{ line: pos.line, column: pos.column, claim: null, message: `the closed-loop poles could not be computed${where}, so the loop's stability is not known; no margin claim can hold until it is`, suggestions: [] }];
    }
    const rhp = loop.closedLoopPoles.filter((p) => !(p.re < 1e-12 * Math.hypot(p.re, p.im)));
    const list = rhp.map((p) => `${formatQuantity(Math.hypot(p.re, p.im) / (2 * Math.PI), 'frequency')}${p.im !== 0 ? ` (complex, Re +${formatQuantity(p.re / (2 * Math.PI), 'frequency')})` : ''}`).join(', ');
    const pm = ctx.model.exact.phase_margin;
    const read = pm?.openLoop !== undefined ? `; the open-loop phase margin reads ${pm.openLoop.toFixed(1)}°, which means nothing for an unstable loop` : '';
    return [{
      line: pos.line,
      column: pos.column,
      claim: null,
      message: `the closed loop is unstable${where}: closed-loop poles in the right half-plane at ${list}${read}`,
      suggestions: ctx.spec.claims.some((c) => c.key === 'phase_margin') ? ['see the phase-margin findings for design changes that make the loop stable'] : [],
    }];
  },
};
export default rule;
