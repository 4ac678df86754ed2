import { CLOSED_LOOP_KEYS, pct } from '../src/model/closed-loop-figures';
import type { Rule } from '../src/verdicts/rule';
import { SETTLING_BAND, STEP_INPUT } from '../src/topologies/common';

/** Operating-point keys that do not change the loop. */
const LOOP_NEUTRAL = new Set([SETTLING_BAND, 'step', STEP_INPUT]);

// Common practice (rule of thumb): a loop is used at the gain it is built
// for, and its phase margin there — for that β, not for β = 1 — should be at
// least about 45° (60° where settling matters): below it, the step response
// rings and the closed loop peaks. The margin at β = 1 says little about a
// stage used at a gain of ten, and the margin at a gain of ten says nothing
// about the same amplifier wired as a buffer.
const rule: Rule = {
  id: 'phase-margin-at-gain',
  description: 'Common practice: at each gain the spec states, the loop keeps at least 45° of phase margin, computed for that β.',
  severity: 'warning',
  concerns: ['gain', 'beta', 'phase_margin'],
  options: { min: 45 },
  scope: 'claims',
  check(ctx, options) {
    // A point that differs from the front matter's only by a settling band or
    // a step (a claim's own arguments) has the same loop: the front matter's
    // point speaks for it.
    const sameLoop = (c: (typeof ctx.spec.claims)[number]) => c.conditions !== undefined && Object.keys(c.conditions.values).every((k) => LOOP_NEUTRAL.has(k));
    if (ctx.spec.claims.length && ctx.spec.claims.every(sameLoop)) return [];
    const values = ctx.model.values;
    const row = ctx.spec.claims.find((c) => c.conditions?.values.gain !== undefined || c.conditions?.values.beta !== undefined);
    const gainKey = ctx.spec.conditions.get('gain');
    const closed = ctx.spec.claims.find((c) => (CLOSED_LOOP_KEYS as readonly string[]).includes(c.key));
    // A stated gain (front matter or a table row), or a closed-loop claim, which is made at this β.
    if (values.gain === undefined && !row && !closed) return [];
    const loop = ctx.model.loop;
    const pm = loop.phaseMargin.value;
    // An unstable loop is closed-loop-stability's finding; no margin, nothing to compare.
    if (loop.stability !== 'stable' || pm === null || pm >= options.min) return [];
    const pos = row?.conditions?.pos ?? gainKey?.keyPos ?? closed?.keyPos ?? ctx.spec.topologyPos;
    const g = values.gain;
    const at = g !== undefined ? `G = ${g > 0 ? '+' : ''}${+g.toPrecision(4)} (β = ${+ctx.model.beta.toPrecision(3)})` : `β = ${+ctx.model.beta.toPrecision(3)}`;
    const os = ctx.model.exact.overshoot?.value;
    const pk = ctx.model.exact.peaking?.value;
    const effects = [os ? `${pct(os)} overshoot` : '', pk ? `${pk.toFixed(1)} dB of peaking` : ''].filter(Boolean).join(' and ');
    return [{
      line: pos.line,
      column: pos.column,
      claim: null,
      computed: pm,
      unit: 'deg',
      message: `at ${at} the loop's phase margin is ${pm.toFixed(1)}°, below the ${options.min}° common practice asks for at the gain a loop is used at${effects ? `: the model gives ${effects}` : ''}`,
      suggestions: ['more phase margin at this gain: more compensation, a higher second pole, or a nulling resistor; a `phase_margin` claim at these conditions is then checked with design changes'],
    }];
  },
};
export default rule;
