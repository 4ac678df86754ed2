// In-process measurements, run by bench/run.mjs as `node --import tsx bench/inprocess.mjs MODE …`
// (tsx lets this file import the TypeScript sources). Prints one JSON object.
//
//   throughput FOLDER BUDGET_MS   checkText over the folder's specs (read into memory first)
//   fix                           one check of the failing-phase-margin spec, and of its passing twin

import { readFileSync, readdirSync } from 'node:fs';
import { join } from 'node:path';
import { checkText } from '../src/check.ts';
import { FAILING_PM_SPEC, PASSING_PM_SPEC } from './generate.mjs';

const median = (xs) => {
  const s = [...xs].sort((a, b) => a - b);
  return s.length % 2 ? s[(s.length - 1) / 2] : (s[s.length / 2 - 1] + s[s.length / 2]) / 2;
};

function time(fn) {
  const t0 = performance.now();
  const r = fn();
  return [performance.now() - t0, r];
}

const [mode, ...args] = process.argv.slice(2);

if (mode === 'throughput') {
  const [folder, budgetText] = args;
  const budget = Number(budgetText);
  const files = readdirSync(folder).filter((f) => f.endsWith('.md')).sort().map((f) => [f, readFileSync(join(folder, f), 'utf8')]);
  // Warm-up on a few specs so that module loading and the first JIT tiers are not counted.
  for (const [name, text] of files.slice(0, 20)) checkText(name, text);
  const perSpec = [];
  const t0 = performance.now();
  for (const [name, text] of files) {
    const [ms, r] = time(() => checkText(name, text));
    perSpec.push({ ms, errors: r.findings.some((f) => f.severity === 'error') });
    if (performance.now() - t0 > budget) break;
  }
  const total = performance.now() - t0;
  const ok = perSpec.filter((s) => !s.errors).map((s) => s.ms);
  const failing = perSpec.filter((s) => s.errors).map((s) => s.ms);
  console.log(JSON.stringify({
    available: files.length,
    checked: perSpec.length,
    totalMs: total,
    perSecond: (perSpec.length / total) * 1000,
    medianMs: median(perSpec.map((s) => s.ms)),
    withoutErrors: { n: ok.length, medianMs: ok.length ? median(ok) : null },
    withErrors: { n: failing.length, medianMs: failing.length ? median(failing) : null },
  }));
} else if (mode === 'fix') {
  // The very first check in a fresh process (modules loaded, nothing warmed), then warm repeats.
  const [firstMs, first] = time(() => checkText('kx4-line-driver.md', FAILING_PM_SPEC));
  const pm = first.findings.find((f) => f.rule === 'phase-margin');
  if (!pm || pm.severity !== 'error') throw new Error('the failing-phase-margin spec does not fail: the bench fixture needs updating');
  const runs = 30;
  const failing = [];
  const passing = [];
  for (let i = 0; i < runs; i++) {
    failing.push(time(() => checkText('kx4-line-driver.md', FAILING_PM_SPEC))[0]);
    passing.push(time(() => checkText('kx4-line-driver.md', PASSING_PM_SPEC))[0]);
  }
  console.log(JSON.stringify({
    runs,
    firstMs,
    failingMedianMs: median(failing),
    passingMedianMs: median(passing),
    phaseMarginDeg: pm.computed,
    suggestions: pm.suggestions.length,
  }));
} else {
  console.error(`usage: node --import tsx bench/inprocess.mjs throughput FOLDER BUDGET_MS | fix`);
  process.exit(2);
}
