import { formatQuantity } from '../src/quantity';
import type { Draft, Rule } from '../src/rule';

// A value outside the plausible range of an integrated block by exactly a
// factor that one wrong prefix explains (m for M is 10⁹, n for µ is 10³) is
// most likely a typing slip rather than a design decision.
const FACTORS = [1e3, 1e-3, 1e6, 1e-6, 1e9, 1e-9];

const rule: Rule = {
  id: 'prefix-slip',
  description: 'Warns when a param lies outside the plausible range for an integrated block by a factor that a wrong SI prefix explains.',
  severity: 'warning',
  concerns: ['params'],
  options: {},
  check(ctx) {
    const out: Draft[] = [];
    for (const entry of ctx.spec.params.values()) {
      const range = entry.spec.plausible;
      if (!range) continue;
      // Only what the author wrote: not a midpoint, not the ends computed from `±N%`.
      const written = entry.tolerance ? [entry.typ] : [entry.typIsMidpoint ? undefined : entry.typ, entry.min, entry.max];
      for (const q of written) {
        if (!q) continue;
        const v = q.quantity.value;
        if (v === 0 || (v >= range[0] && v <= range[1])) continue;
        const w = q.quantity.written;
        // Prefer the case slip the author's own prefix suggests (m ↔ M), then the smallest factor.
        const order = /^m/.test(w.unit) ? [1e9, ...FACTORS] : /^M/.test(w.unit) ? [1e-9, ...FACTORS] : FACTORS;
        const factor = order.find((f) => v * f >= range[0] && v * f <= range[1]);
        if (factor === undefined) continue;
        const likely = formatQuantity(v * factor, entry.spec.kind, Math.max(2, w.sigDigits));
        out.push({
          line: q.pos.line,
          column: q.pos.column,
          claim: null,
          message: `${entry.key} = ${w.text} is implausible for ${entry.spec.description} (expected ${formatQuantity(range[0], entry.spec.kind, 1)} to ${formatQuantity(range[1], entry.spec.kind, 1)}); did you mean ${likely}?`,
          suggestions: [`if a prefix slipped, write \`${entry.key}: ${likely}\``],
        });
      }
    }
    return out;
  },
};
export default rule;
