// Long fuzz run of the whole check, in-process. Prints figures and every
// failure; asserts nothing about speed.
//
//   node --import tsx bench/fuzz.mjs [COUNT]          COUNT documents (default 100000)
//   node --import tsx bench/fuzz.mjs --slice N        the first N documents of the same run (CI: 3000)
//   node --import tsx bench/fuzz.mjs --seed S         another run (default seed 1)
//   node --import tsx bench/fuzz.mjs --seed S --index I
//                                                     re-run one document, print it and its findings
//   --reports K                                       also render the text, JSON and reviewer reports
//                                                     of every K-th document (default 10; 1: all)
//   --hang-ms T                                       a document still running after T ms is a hang
//   node --import tsx bench/fuzz.mjs --scaling        time of one check of inputs built to be slow, at
//                                                     doubling sizes (far below the 5 MB limit): a time
//                                                     that grows ×4 per doubling is quadratic
//
// The mix, by document index i: i % 10 in 0…4 mutates a demo spec (1 to 4
// mutations: byte flips, line deletions, duplications and swaps, insertions of
// YAML and Markdown punctuation, unit swaps, number changes, line ends, BOM,
// truncation); 5…7 generates a random spec of a random topology (plausible or
// 1e-18…1e18 values, tables with conditions) and mutates it half of the time;
// 8 is random garbage; 9 is a random spec with values anywhere in 1e-18…1e18,
// except that every twentieth document (i % 20 = 19) is one of the second
// campaign's families (test/fuzz/families.ts: block scalars, cell escapes and
// entities, encodings without marks read from a file, long lines, deep lists,
// large networks, giant tables), whose restatements are applied and read back.
// Document i of seed S is the same on every machine, so a failure is
// reproduced by `--seed S --index I`.
//
// A failure is an exception from checkText or a report writer, a finding
// that is not well formed (test/fuzz/support.ts: findingProblems), or a
// document that does not finish: the documents run in a worker thread, and
// one that takes longer than --hang-ms (default 20000) is recorded as a hang
// and the run goes on in a fresh worker. Failures are grouped by what went
// wrong; each group shows its first documents with their seed, index and
// input. Exit status 1 on any failure.

import { writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { Worker, isMainThread, parentPort, workerData } from 'node:worker_threads';

// Loader hooks are per thread: the worker registers tsx itself before it loads the TypeScript sources.
if (!isMainThread) await (await import('tsx/esm/api')).register();
const { checkText } = await import('../src/check.ts');
const { DEMO_SPECS, applyMutation, findingProblems, randomGarbage, randomMutation, randomSpec, reportProblems, rng } = await import('../test/fuzz/support.ts');
const { encodingProblems, familyDocument, pickFamily, restateProblems } = await import('../test/fuzz/families.ts');

function parseArgs(argv) {
  const o = { count: 100000, seed: 1, index: undefined, reports: 10, scaling: false, hangMs: 20000 };
  const args = [...argv];
  while (args.length) {
    const a = args.shift();
    const num = (flag) => {
      const v = args.shift();
      if (v === undefined || !/^\d+$/.test(v)) throw new Error(`${flag} takes a whole number`);
      return Number(v);
    };
    if (a === '--slice') o.count = num(a);
    else if (a === '--seed') o.seed = num(a);
    else if (a === '--index') o.index = num(a);
    else if (a === '--reports') o.reports = Math.max(1, num(a));
    else if (a === '--scaling') o.scaling = true;
    else if (a === '--hang-ms') o.hangMs = Math.max(100, num(a));
    else if (/^\d+$/.test(a)) o.count = Number(a);
    else throw new Error(`unknown argument '${a}'`);
  }
  return o;
}

const KINDS = ['mutated-demo', 'mutated-demo', 'mutated-demo', 'mutated-demo', 'mutated-demo', 'random-spec', 'random-spec', 'random-spec', 'garbage', 'wide-spec'];

/** Document `index` of run `seed`: its kind, text and the mutations applied. */
export function documentAt(seed, index) {
  const r = rng((Math.imul(seed, 0x9e3779b1) ^ Math.imul(index + 1, 0x85ebca6b)) >>> 0);
  const kind = KINDS[index % 10];
  let text;
  let source;
  const mutations = [];
  const mutate = (times) => {
    for (let k = 0; k < times; k++) {
      const m = randomMutation(r);
      mutations.push(m);
      text = applyMutation(text, m);
    }
  };
  if (index % 20 === 19) {
    // One document in twenty: a family of the second campaign (test/fuzz/families.ts).
    const family = pickFamily(r);
    return { kind: family, source: `family ${family}`, text: familyDocument(r, family), mutations, r };
  }
  if (kind === 'mutated-demo') {
    const demo = r.pick(DEMO_SPECS);
    source = demo.name;
    text = demo.text;
    mutate(r.int(1, 4));
  } else if (kind === 'random-spec') {
    text = randomSpec(r);
    source = 'random spec';
    if (r.chance(0.5)) mutate(r.int(1, 3));
  } else if (kind === 'garbage') {
    text = randomGarbage(r);
    source = 'garbage';
  } else {
    text = randomSpec(r, { wide: true });
    source = 'random spec, values in 1e-18…1e18';
  }
  return { kind, source, text, mutations };
}

function runOne(doc, withReports) {
  let result;
  const t0 = performance.now();
  if (doc.kind === 'encoding') {
    // Written to a file in UTF-16 or UTF-32 and read as the command reads it.
    const problems = encodingProblems(doc.r, doc.text);
    return { ms: performance.now() - t0, problems, result: { skipped: false, findings: [] } };
  }
  try {
    result = checkText('fuzz.md', doc.text);
  } catch (err) {
    return { ms: performance.now() - t0, problems: [`checkText throws ${err?.constructor?.name ?? 'a value'}: ${firstLines(err)}`] };
  }
  const ms = performance.now() - t0;
  const problems = findingProblems(result, doc.text);
  if (withReports) problems.push(...reportProblems(result, doc.text));
  // Restating never corrupts: every planned restatement is applied and read back (families and every tenth document).
  if (doc.kind === 'block-scalar' || doc.kind === 'cell-escape' || withReports) {
    try {
      problems.push(...restateProblems(result, doc.text));
    } catch (err) {
      problems.push(`restating throws ${err?.constructor?.name ?? 'a value'}: ${firstLines(err)}`);
    }
  }
  return { ms, problems, result };
}

function firstLines(err) {
  const stack = String(err?.stack ?? err);
  const lines = stack.split('\n');
  const frame = lines.slice(1).find((l) => l.includes('/src/') || l.includes('/rules/')) ?? lines[1] ?? '';
  return `${lines[0]} ${frame.trim()}`;
}

/** What went wrong, without the particulars of one document (numbers, quoted text). */
function signature(problem) {
  return problem
    .replace(/`[^`]*`/g, '`…`')
    .replace(/finding \d+ \(([^ ]+) \d+:\d+\)/, 'finding ($1)')
    .replace(/\d+(\.\d+)?(e[+-]?\d+)?/g, 'N')
    .slice(0, 160);
}

function show(text, limit = 4000) {
  return text.length <= limit ? JSON.stringify(text) : `${JSON.stringify(text.slice(0, limit))}… (${text.length} characters)`;
}

const o = parseArgs(process.argv.slice(2));

if (isMainThread && o.scaling) {
  // A clean spec, then a body (or a front-matter value) that grows.
  const head = '---\npolecheck: 1\ntopology: single-stage\nparams:\n  gm: 800 µS\n  rout: 8 MΩ\n  cout: 150 fF\nclaims:\n  gbw: 849 MHz\n---\n\n';
  const table = '| Parameter | Typ |\n|---|---|\n| GBW | 849 MHz |\n\n';
  const cases = [
    ['table cell of digits ending in a letter (Typ column with a Unit column)', [2000, 4000, 8000, 16000], (n) => `${head}| Parameter | Typ | Unit |\n|---|---|---|\n| GBW | ${'1'.repeat(n)}x | MHz |\n`],
    ['Conditions cell: a, n spaces, b (no `=`)', [2000, 4000, 8000, 16000], (n) => `${head}| Parameter | Typ | Conditions |\n|---|---|---|\n| GBW | 849 MHz | a${' '.repeat(n)}b |\n`],
    ['n identical table rows (each pair compared by conflicting-claims)', [250, 500, 1000, 2000], (n) => `${head}| Parameter | Typ |\n|---|---|\n${'| GBW | 849 MHz |\n'.repeat(n)}`],
    ['n table rows at n different conditions (one operating point each)', [25, 50, 100, 200], (n) => `${head}| Parameter | Typ | Conditions |\n|---|---|---|\n${Array.from({ length: n }, (_, i) => `| GBW | 849 MHz | CL = ${i + 1} fF |\n`).join('')}`],
    ['nested emphasis *…*x*…* beside a table', [1000, 2000, 4000, 8000], (n) => `${head}${table}${'*'.repeat(n)}x${'*'.repeat(n)}\n`],
    ['nested list, n levels, beside a table', [50, 100, 200, 400], (n) => `${head}${table}${Array.from({ length: n }, (_, i) => `${' '.repeat(2 * i)}- x`).join('\n')}\n`],
    ['n open brackets [[[… beside a table', [2500, 5000, 10000, 20000], (n) => `${head}${table}${'['.repeat(n)}x${']'.repeat(n)}\n`],
    ['n unknown keys in the front matter', [1000, 2000, 4000, 8000], (n) => head.replace('claims:', `${Array.from({ length: n }, (_, i) => `k${i}: 1`).join('\n')}\nclaims:`)],
  ];
  checkText('warm.md', head);
  console.log('polecheck fuzz --scaling: one check each, ms (size in characters)');
  for (const [name, sizes, make] of cases) {
    const cells = [];
    for (const n of sizes) {
      const text = make(n);
      const t = performance.now();
      let note = '';
      try {
        checkText('scaling.md', text);
      } catch (err) {
        note = ` threw ${err?.constructor?.name}`;
      }
      cells.push(`n=${n}: ${(performance.now() - t).toFixed(0)} ms (${text.length})${note}`);
    }
    console.log(`  ${name}\n    ${cells.join('; ')}`);
  }
  process.exit(0);
}

if (isMainThread && o.index !== undefined) {
  const doc = documentAt(o.seed, o.index);
  console.log(`document ${o.index} of seed ${o.seed}: ${doc.kind} (${doc.source})`);
  if (doc.mutations.length) console.log(`mutations: ${JSON.stringify(doc.mutations)}`);
  console.log(`input: ${JSON.stringify(doc.text)}\n`);
  console.log(doc.text);
  const { ms, problems, result } = runOne(doc, true);
  console.log(`\nchecked in ${ms.toFixed(1)} ms`);
  if (result) for (const f of result.findings) console.log(`  ${f.line}:${f.column} ${f.severity} ${f.rule}: ${f.message}`);
  if (problems.length) {
    console.log('\nproblems:');
    for (const p of problems) console.log(`  ${p}`);
    try {
      checkText('fuzz.md', doc.text);
    } catch (err) {
      console.log(`\n${err?.stack ?? err}`);
    }
  }
  process.exit(problems.length ? 1 : 0);
}

if (!isMainThread) {
  // The worker: documents from..count, one message before and one after each.
  const { seed, from, count, reports } = workerData;
  for (const d of DEMO_SPECS) checkText(d.name, d.text); // warm-up: loading and the first JIT tiers are not counted
  for (let i = from; i < count; i++) {
    const doc = documentAt(seed, i);
    parentPort.postMessage({ type: 'start', i });
    const { ms, problems, result } = runOne(doc, i % reports === 0);
    parentPort.postMessage({
      type: 'done',
      i,
      kind: doc.kind,
      ms,
      length: doc.text.length,
      findings: result ? result.findings.length : 0,
      skipped: result ? result.skipped : false,
      problems,
    });
  }
  parentPort.postMessage({ type: 'end' });
} else {
  const groups = new Map();
  const byKind = new Map();
  const slowest = [];
  let failed = 0;
  let findings = 0;
  let skipped = 0;
  let done = 0;
  let workers = 0;
  const t0 = performance.now();
  let lastReport = t0;
  const fail = (i, problems) => {
    failed++;
    const doc = documentAt(o.seed, i);
    for (const p of new Set(problems.map(signature))) {
      const g = groups.get(p) ?? { count: 0, kinds: {}, examples: [] };
      g.count++;
      g.kinds[doc.kind] = (g.kinds[doc.kind] ?? 0) + 1;
      if (g.examples.length < 3) g.examples.push({ i, doc, problem: problems.find((x) => signature(x) === p) });
      groups.set(p, g);
    }
  };
  await new Promise((resolveRun) => {
    const start = (from) => {
      if (from >= o.count) return resolveRun();
      workers++;
      const w = new Worker(new URL(import.meta.url), { workerData: { seed: o.seed, from, count: o.count, reports: o.reports } });
      let current = { i: from, since: performance.now(), running: false };
      let over = false;
      const watchdog = setInterval(() => {
        if (!over && current.running && performance.now() - current.since > o.hangMs) {
          over = true;
          clearInterval(watchdog);
          const i = current.i;
          done++;
          const k = byKind.get(documentAt(o.seed, i).kind) ?? { n: 0, ms: 0 };
          k.n++;
          byKind.set(documentAt(o.seed, i).kind, k);
          fail(i, [`does not finish: still running after ${o.hangMs} ms`]);
          w.terminate().then(() => start(i + 1));
        }
      }, 250);
      w.on('message', (m) => {
        if (m.type === 'start') current = { i: m.i, since: performance.now(), running: true };
        else if (m.type === 'done') {
          current.running = false;
          done++;
          const k = byKind.get(m.kind) ?? { n: 0, ms: 0 };
          k.n++;
          k.ms += m.ms;
          byKind.set(m.kind, k);
          findings += m.findings;
          if (m.skipped) skipped++;
          slowest.push({ ms: m.ms, i: m.i, kind: m.kind, length: m.length });
          if (slowest.length > 40) {
            slowest.sort((a, b) => b.ms - a.ms);
            slowest.length = 10;
          }
          if (m.problems.length) fail(m.i, m.problems);
          const now = performance.now();
          if (now - lastReport > 30000) {
            lastReport = now;
            console.error(`… ${done}/${o.count} documents, ${((now - t0) / 1000).toFixed(0)} s, ${failed} failing`);
          }
        } else if (m.type === 'end' && !over) {
          over = true;
          clearInterval(watchdog);
          w.terminate().then(() => resolveRun());
        }
      });
      w.on('error', (err) => {
        if (over) return;
        over = true;
        clearInterval(watchdog);
        if (!current.running) {
          // Died before its first document: nothing to blame on a document, and a fresh worker would die too.
          console.error(`polecheck fuzz: the worker could not start: ${err?.stack ?? err}`);
          process.exit(2);
        }
        // The worker died (out of memory, a stack overflow outside checkText): the document it was on fails.
        done++;
        fail(current.i, [`the worker died: ${firstLines(err)}`]);
        start(current.i + 1);
      });
    };
    start(0);
  });
  const seconds = (performance.now() - t0) / 1000;
  slowest.sort((a, b) => b.ms - a.ms);

  console.log(`polecheck fuzz run: seed ${o.seed}, ${done} documents${workers > 1 ? ` (${workers - 1} hung or crashed: restarted the worker)` : ''}`);
  console.log(`  time ${seconds.toFixed(1)} s, ${(done / seconds).toFixed(0)} documents/s`);
  console.log(`  ${done - skipped} read as specs, ${skipped} skipped as pages, ${findings} findings; reports rendered for every ${o.reports === 1 ? '' : `${o.reports}th `}document`);
  for (const [kind, k] of byKind) console.log(`  ${kind.padEnd(13)} ${String(k.n).padStart(7)} documents, mean ${(k.ms / k.n).toFixed(2)} ms (hangs excluded)`);
  console.log(`  slowest: ${slowest.slice(0, 5).map((x) => `#${x.i} ${x.kind} ${x.ms.toFixed(0)} ms (${x.length} chars)`).join('; ')}`);
  if (slowest.length) console.log(`  slowest document: #${slowest[0].i} ${slowest[0].kind} ${slowest[0].ms.toFixed(0)} ms (${slowest[0].length} chars) — ${slowest[0].ms <= 1000 ? 'within' : 'OVER'} the 1 s bar; reproduce: node --import tsx bench/fuzz.mjs --seed ${o.seed} --index ${slowest[0].i}`);
  console.log(`  failing documents: ${failed}`);

  if (groups.size) {
    const dump = join(tmpdir(), `polecheck-fuzz-${o.seed}-${process.pid}.json`);
    const all = [...groups].sort((a, b) => b[1].count - a[1].count);
    writeFileSync(dump, JSON.stringify(all.map(([sig, g]) => ({ signature: sig, count: g.count, kinds: g.kinds, examples: g.examples.map((e) => ({ seed: o.seed, index: e.i, kind: e.doc.kind, source: e.doc.source, mutations: e.doc.mutations, problem: e.problem, input: e.doc.text })) })), null, 2));
    console.log(`\n${groups.size} kinds of failure (all inputs in ${dump}):`);
    for (const [sig, g] of all) {
      console.log(`\n✗ ${g.count} × ${sig}`);
      console.log(`  (${Object.entries(g.kinds).map(([k, n]) => `${n} ${k}`).join(', ')})`);
      for (const e of g.examples) {
        console.log(`  seed ${o.seed} index ${e.i} (${e.doc.kind}, ${e.doc.source}) — reproduce: node --import tsx bench/fuzz.mjs --seed ${o.seed} --index ${e.i}`);
        console.log(`    ${e.problem}`);
        if (e.doc.mutations.length) console.log(`    mutations: ${JSON.stringify(e.doc.mutations)}`);
        console.log(`    input: ${show(e.doc.text, 1500)}`);
      }
    }
  }
  process.exit(failed ? 1 : 0);
}
