// The review pages in a real browser: Debian's chromium driven by
// playwright-core (no browser download). The built command (scripts/build.mjs,
// into a scratch folder) writes the demo repository's pages, and its JSON
// report is the reference the pages are read against:
// - every page renders without a console error or a page error;
// - every plot has its axes, with the expected tick labels;
// - the crossover marker sits at the computed frequency, read back from its
//   SVG coordinates through the axis scale (the tick labels' positions);
// - the claims table states every failing claim the JSON report has, at the
//   same line with the same figure, and no other;
// - the links between the index and the block pages work.
// Screenshots of one block page (desktop and narrow, light and dark) are
// saved under test-artifacts/ (git-ignored; CI keeps them as artifacts).

import { execFileSync, spawnSync } from 'node:child_process';
import { existsSync, mkdirSync, mkdtempSync, readFileSync, readdirSync, renameSync, rmSync, symlinkSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath, pathToFileURL } from 'node:url';
import { type Browser, type Page, chromium } from 'playwright-core';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';

const ROOT = resolve(dirname(fileURLToPath(import.meta.url)), '..', '..');
const CHROMIUM = process.env.CHROMIUM ?? '/usr/bin/chromium';
const ARTIFACTS = join(ROOT, 'test-artifacts');
const FLAGS = ['--headless', '--no-sandbox', '--disable-gpu', '--disable-quic', '--no-first-run', '--disable-background-networking', '--disable-component-update', '--disable-sync'];

interface JsonFinding {
  rule: string;
  line: number;
  claim: string | null;
  computed: number | null;
  verdict?: { bound: string; outcome: string; computed: number | null };
}
interface JsonReport {
  files: Array<{ path: string; skipped: boolean; findings: JsonFinding[] }>;
}

let scratch: string;
let site: string;
let report: JsonReport;
let browser: Browser;

beforeAll(async () => {
  scratch = mkdtempSync(join(tmpdir(), 'polecheck-browser-'));
  for (const name of ['src', 'rules', 'node_modules', 'package.json', 'README.md']) symlinkSync(join(ROOT, name), join(scratch, name));
  execFileSync(process.execPath, [join(ROOT, 'scripts', 'build.mjs')], { cwd: scratch, stdio: 'pipe' });
  site = join(scratch, 'site');
  const bin = join(scratch, 'dist', 'polecheck.js');
  const env = { ...process.env, NO_COLOR: '1' };
  const html = spawnSync(process.execPath, [bin, 'report', '--html', site, 'specs'], { cwd: ROOT, env, encoding: 'utf8' });
  if (html.status !== 0) throw new Error(`report --html failed (${html.status}):\n${html.stderr}`);
  const json = spawnSync(process.execPath, [bin, 'report', '--format', 'json', 'specs'], { cwd: ROOT, env, encoding: 'utf8' });
  report = JSON.parse(json.stdout) as JsonReport;
  // playwright-core gives each launch a fresh profile of its own (it refuses --user-data-dir).
  browser = await chromium.launch({ executablePath: CHROMIUM, args: FLAGS });
}, 120_000);

afterAll(async () => {
  await browser?.close();
  if (scratch) rmSync(scratch, { recursive: true, force: true });
});

/** A page with its console errors and page errors collected. */
async function open(file: string, opts: { width?: number; scheme?: 'light' | 'dark' } = {}): Promise<{ page: Page; errors: string[] }> {
  const page = await browser.newPage({ viewport: { width: opts.width ?? 1280, height: 900 }, colorScheme: opts.scheme ?? 'light' });
  const errors: string[] = [];
  page.on('console', (m) => {
    if (m.type() === 'error' || m.type() === 'warning') errors.push(`${m.type()}: ${m.text()}`);
  });
  page.on('pageerror', (e) => errors.push(`page error: ${e.message}`));
  // Nothing may be fetched: a self-contained page asks for no URL beyond itself.
  page.on('request', (r) => {
    if (!r.url().startsWith('file://')) errors.push(`request: ${r.url()}`);
  });
  await page.goto(pathToFileURL(join(site, file)).href);
  return { page, errors };
}

const blockPages = (): Array<{ block: string; file: string; path: string }> => {
  const index = readFileSync(join(site, 'index.html'), 'utf8');
  return [...index.matchAll(/<tr data-block="([^"]+)"><td><a href="([^"]+)">[\s\S]*?<td><code>([^<]+)<\/code><\/td><\/tr>/g)].map((m) => ({ block: m[1], file: m[2], path: m[3] }));
};

interface Axis {
  labels: string[];
  /** The tick labels' positions along the axis, px. */
  at: number[];
}

/** The tick labels of one axis of a plot, with their positions. */
async function axis(page: Page, plot: string, which: 'x' | 'y'): Promise<Axis> {
  return (await axes(page, plot))[plot][which];
}

/** Every plot's axes (tick labels with their positions, and the axis titles), read in one round trip. */
async function axes(page: Page, only?: string): Promise<Record<string, { x: Axis; y: Axis; titles: string[] }>> {
  return page.$$eval(
    only ? `svg#${only}` : 'svg[role="img"]',
    (svgs) => {
      const read = (svg: (typeof svgs)[number], which: string) => {
        const ts = [...svg.querySelectorAll(`g[aria-label="${which}-axis tick label"] text`)].map((t) => {
          const m = /translate\(([-\d.e]+),([-\d.e]+)\)/.exec(t.getAttribute('transform') ?? '')!;
          return { label: t.textContent ?? '', at: Number(m[which === 'x' ? 1 : 2]) };
        });
        return { labels: ts.map((t) => t.label), at: ts.map((t) => t.at) };
      };
      return Object.fromEntries(svgs.map((svg) => [svg.id, { x: read(svg, 'x'), y: read(svg, 'y'), titles: [...svg.querySelectorAll('g[aria-label$="-axis label"] text')].map((t) => t.textContent ?? '') }]));
    },
  );
}

const PREFIX: Record<string, number> = { p: 1e-12, n: 1e-9, µ: 1e-6, m: 1e-3, '': 1, k: 1e3, M: 1e6, G: 1e9, T: 1e12 };
/** "10 kHz" → 1e4; "−100 MHz" → −1e8; "0" → 0. */
function valueOf(label: string, unit: string): number {
  if (label === '0') return 0;
  const m = new RegExp(`^(−?)([\\d.]+) ([pnµmkMGT]?)${unit.replace(/[/√]/g, (c) => `\\${c}`)}$`).exec(label);
  if (!m) throw new Error(`'${label}' is not a tick label in ${unit}`);
  return (m[1] ? -1 : 1) * Number(m[2]) * PREFIX[m[3]];
}

/** Checks a log frequency axis: decades in order, equally spaced; returns the frequency at x px. */
function logAxis(a: Axis, unit = 'Hz'): (x: number) => number {
  const v = a.labels.map((l) => valueOf(l, unit));
  expect(v.length).toBeGreaterThanOrEqual(3);
  for (let i = 1; i < v.length; i++) {
    expect(v[i] / v[i - 1]).toBeCloseTo(10, 9);
    expect(a.at[i] - a.at[i - 1]).toBeCloseTo(a.at[1] - a.at[0], 1);
  }
  const perDecade = a.at[1] - a.at[0];
  return (x) => v[0] * 10 ** ((x - a.at[0]) / perDecade);
}

describe('the review pages in chromium', () => {
  it('has an index that links every block page, and each links back', async () => {
    const blocks = blockPages();
    expect(blocks.map((b) => b.path).sort()).toEqual(report.files.filter((f) => !f.skipped).map((f) => f.path).sort());
    const { page, errors } = await open('index.html');
    for (const b of blocks.slice(0, 3)) {
      await page.click(`a[href="${b.file}"]`);
      expect(page.url()).toBe(pathToFileURL(join(site, b.file)).href);
      expect(await page.textContent('h1')).toBe(b.block);
      await page.click('nav a[href="index.html"]');
      expect(page.url()).toBe(pathToFileURL(join(site, 'index.html')).href);
    }
    // Every link of the index leads to a page that exists.
    const hrefs = await page.$$eval('table#blocks a', (as) => as.map((a) => a.getAttribute('href')!));
    for (const h of hrefs) expect(existsSync(join(site, h)), h).toBe(true);
    expect(errors).toEqual([]);
    await page.close();
  });

  it('renders every block page without errors, every plot with its axes and tick labels', async () => {
    for (const b of blockPages()) {
      const { page, errors } = await open(b.file);
      const plots = await axes(page);
      expect(Object.keys(plots), b.block).toEqual(expect.arrayContaining(['bode-mag', 'bode-phase', 'pz-map']));
      for (const [id, { x, y, titles }] of Object.entries(plots)) {
        expect(x.labels.length, `${b.block} ${id} x`).toBeGreaterThanOrEqual(3);
        expect(y.labels.length, `${b.block} ${id} y`).toBeGreaterThanOrEqual(2);
        // The axis titles name their units.
        expect(titles.join(' '), `${b.block} ${id}`).toMatch(/\((Hz|dB|°|s|V\/√Hz)\)|% of final value/);
        if (id.startsWith('bode') || id === 'noise') logAxis(x);
        if (id === 'bode-phase') for (const l of y.labels) expect(Math.abs(Number(l.replace('−', '-').replace('°', '')) % 45)).toBe(0);
        if (id === 'pz-map') {
          expect(x.labels).toContain('0');
          for (const l of x.labels) valueOf(l, 'Hz');
        }
        if (id === 'step' || id === 'settling') for (const l of x.labels) valueOf(l, 's');
      }
      expect(errors, b.block).toEqual([]);
      await page.close();
    }
  });

  it('puts the crossover marker of vcm-buffer at the computed frequency (the JSON report’s gbw at β = 1)', async () => {
    // The demo's vcm-buffer runs at β = 1, so the loop crossover is A's unity-gain frequency: the figure of its failing gbw claim.
    const gbw = report.files.find((f) => f.path.endsWith('vcm-buffer.md'))!.findings.find((f) => f.claim === 'gbw' && f.verdict)!;
    expect(gbw.computed).toBeGreaterThan(0);
    const { page } = await open('strand-vcm-buffer.html');
    const toHz = logAxis(await axis(page, 'bode-mag', 'x'));
    const cx = Number(await page.getAttribute('svg#bode-mag g.mk-crossover circle', 'cx'));
    // Coordinates are rounded to 0.01 px: at about 50 px a decade, 0.05 % of a frequency.
    expect(Math.abs(toHz(cx) / gbw.computed! - 1)).toBeLessThan(1e-3);
    // The same frequency on the phase plot.
    const toHz2 = logAxis(await axis(page, 'bode-phase', 'x'));
    const cx2 = Number(await page.getAttribute('svg#bode-phase g.mk-crossover circle', 'cx'));
    expect(Math.abs(toHz2(cx2) / gbw.computed! - 1)).toBeLessThan(1e-3);
    await page.close();
  });

  it('states in the claims table exactly the failing and thin claims of the JSON report', async () => {
    for (const b of blockPages()) {
      const file = report.files.find((f) => f.path === b.path)!;
      const judged = file.findings.filter((f) => f.verdict && f.verdict.outcome !== 'holds');
      const { page } = await open(b.file);
      const rows = await page.$$eval('table#claims tbody tr[data-claim]', (trs) =>
        trs.map((tr) => ({ claim: tr.getAttribute('data-claim')!, line: Number(tr.getAttribute('data-line')), verdict: tr.getAttribute('data-verdict')!, exact: tr.getAttribute('data-exact')! })),
      );
      const flagged = rows.filter((r) => r.verdict !== 'holds');
      expect(flagged.map((r) => `${r.claim}:${r.line}:${r.verdict}`).sort(), b.block).toEqual([...new Set(judged.map((f) => `${f.claim}:${f.line}:${f.verdict!.outcome}`))].sort());
      // A typical statement is judged against the typical figure: the table's exact value is the report's computed one.
      for (const f of judged.filter((x) => x.verdict!.bound === 'typ' && x.computed !== null)) {
        const row = rows.find((r) => r.claim === f.claim && r.line === f.line)!;
        expect(Number(row.exact) / f.computed! - 1, `${b.block} ${f.claim}`).toBeCloseTo(0, 12);
      }
      // The restatement is printed under the failing claim.
      if (judged.length) expect(await page.locator('tr.fixes').count(), b.block).toBeGreaterThan(0);
      await page.close();
    }
  });

  it('gets the same bytes from worker threads (the built worker renders the page data)', { timeout: 120_000 }, () => {
    const again = join(scratch, 'site-workers');
    const r = spawnSync(process.execPath, [join(scratch, 'dist', 'polecheck.js'), 'report', '--html', again, 'specs'], { cwd: ROOT, env: { ...process.env, NO_COLOR: '1', POLECHECK_WORKERS: '2' }, encoding: 'utf8' });
    expect(r.status, r.stderr).toBe(0);
    const names = readdirSync(site).sort();
    expect(readdirSync(again).sort()).toEqual(names);
    for (const n of names) expect(readFileSync(join(again, n), 'utf8') === readFileSync(join(site, n), 'utf8'), n).toBe(true);
  });

  it('leaves the plotting library to report --html: check runs without it', () => {
    const libs = join(scratch, 'dist', 'html-libs.cjs');
    renameSync(libs, `${libs}.away`);
    try {
      const r = spawnSync(process.execPath, [join(scratch, 'dist', 'polecheck.js'), 'specs'], { cwd: ROOT, env: { ...process.env, NO_COLOR: '1' }, encoding: 'utf8' });
      // The demo has failing claims: exit 1 with the tally, as always.
      expect(r.status, r.stderr).toBe(1);
      expect(r.stdout).toMatch(/11 blocks, \d+ claims: \d+ fail/);
      const html = spawnSync(process.execPath, [join(scratch, 'dist', 'polecheck.js'), 'report', '--html', join(scratch, 'nowhere'), 'specs'], { cwd: ROOT, encoding: 'utf8' });
      expect(html.status).not.toBe(0);
      expect(html.stderr).toMatch(/html-libs\.cjs/);
    } finally {
      renameSync(`${libs}.away`, libs);
    }
  });

  it('saves screenshots of the vcm-buffer page at desktop and narrow widths, light and dark', async () => {
    mkdirSync(ARTIFACTS, { recursive: true });
    for (const [width, scheme] of [[1280, 'light'], [390, 'light'], [1280, 'dark']] as const) {
      const { page, errors } = await open('strand-vcm-buffer.html', { width, scheme });
      const path = join(ARTIFACTS, `vcm-buffer-${width}-${scheme}.png`);
      await page.screenshot({ path, fullPage: true });
      expect(readFileSync(path).subarray(1, 4).toString()).toBe('PNG');
      // Narrow: the plots keep a legible size and scroll sideways inside their figure; the page itself does not.
      if (width === 390) {
        const overflow = (await page.evaluate('document.documentElement.scrollWidth - document.documentElement.clientWidth')) as number;
        expect(overflow).toBeLessThanOrEqual(0);
      }
      expect(errors).toEqual([]);
      await page.close();
    }
  });
});
