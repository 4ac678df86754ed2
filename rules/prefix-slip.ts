import { formatQuantity } from '../src/quantity';
import type { Draft, Rule } from '../src/verdicts/rule';
import { slipFactor, writtenValues } from '../src/fixes/slips';

// A likely slip of one SI prefix (src/fixes/slips.ts): the value is outside the
// plausible range of an integrated block by exactly the factor it explains.

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
      for (const q of writtenValues(entry)) {
        const factor = slipFactor(entry, q);
        if (factor === undefined) continue;
        const v = q.quantity.value;
        const w = q.quantity.written;
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
