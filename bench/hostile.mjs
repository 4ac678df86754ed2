// The hostile documents of the second robustness campaign (issue 17), each
// checked once in this process: prints the time of each (the bar is about
// 1 s on the 2-core CI machine) and its report size. Asserts nothing.
//
//   node --import tsx bench/hostile.mjs [NAME-SUBSTRING]

const { checkText } = await import('../src/check.ts');
const { HOSTILE } = await import('../test/fuzz/hostile-docs.ts');
const { jsonReport } = await import('../src/report/json.ts');

const only = process.argv[2];
checkText('warm.md', HOSTILE[0].make());
console.log('polecheck hostile documents: one check each');
for (const h of HOSTILE) {
  if (only && !h.name.includes(only)) continue;
  const text = h.make();
  const t = performance.now();
  let note = '';
  let json = 0;
  try {
    const r = checkText('hostile.md', text);
    note = `${r.findings.length} findings`;
    json = jsonReport([r]).length;
  } catch (err) {
    note = `threw ${err?.constructor?.name}: ${String(err?.message).slice(0, 80)}`;
  }
  const ms = performance.now() - t;
  console.log(`  ${ms.toFixed(0).padStart(6)} ms  ${h.name} (${text.length} chars → ${json} chars of JSON; ${note})`);
}
