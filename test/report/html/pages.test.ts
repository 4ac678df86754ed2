// The review pages of the demo repository: written twice to the same bytes,
// self-contained (no script, no outside reference), every plot with its text
// alternative, the caution on every page; the SVG of two blocks kept as file
// snapshots (a change of layout shows as a diff in review).

import { readFileSync, readdirSync } from 'node:fs';
import { beforeAll, describe, expect, it } from 'vitest';
import { checkText } from '../../../src/check';
import { main } from '../../../src/cli';
import { decades, niceTicks, roundSvg } from '../../../src/report/html/plots';
import { CAUTION } from '../../../src/report/summary';
import { type Site, htmlSection, ready, renderSite } from '../../../src/report/html/writer';

const SPECS = readdirSync('specs/strand').filter((f) => f.endsWith('.md')).sort().map((f) => `specs/strand/${f}`);
const sections = () => SPECS.map((p) => htmlSection(checkText(p, readFileSync(p, 'utf8'))));

let site: Site;
beforeAll(async () => {
  await ready();
  site = renderSite(sections());
}, 120_000);

const svgs = (html: string): Map<string, string> => new Map([...html.matchAll(/<svg id="([^"]+)"[\s\S]*?<\/svg>/g)].map((m) => [m[1], m[0]]));

describe('the review pages of the demo repository', () => {
  it('are the same bytes when written again (in the same process: no counter leaks from one plot to the next)', { timeout: 120_000 }, () => {
    const again = renderSite(sections());
    expect([...again.files.keys()]).toEqual([...site.files.keys()]);
    for (const [name, text] of site.files) expect(again.files.get(name), name).toBe(text);
  });

  it('are one index and one page per block, linked both ways', () => {
    expect(site.files.size).toBe(SPECS.length + 1);
    const index = site.files.get('index.html')!;
    for (const p of site.pages) {
      expect(index).toContain(`<a href="${p.file}">${p.block}</a>`);
      expect(site.files.get(p.file)).toContain('<a href="index.html">');
    }
  });

  it('need no script and nothing from outside, and carry the caution', () => {
    for (const [name, html] of site.files) {
      expect(html, name).not.toMatch(/<script|<link |<img |<iframe|@import|url\((?!#)/i);
      expect(html, name).not.toMatch(/(src|href)="(https?:)?\/\//i);
      expect(html, name).toContain(CAUTION);
    }
  });

  it('give every plot a title and a description, named by aria-labelledby', () => {
    for (const p of site.pages) {
      const html = site.files.get(p.file)!;
      const plots = svgs(html);
      expect(plots.size, p.file).toBeGreaterThanOrEqual(3);
      for (const [id, svg] of plots) {
        expect(svg).toContain(`aria-labelledby="${id}-title ${id}-desc"`);
        expect(svg).toMatch(new RegExp(`<title id="${id}-title">[^<]+</title><desc id="${id}-desc">[^<]{40,}</desc>`));
      }
    }
  });

  it('give every element id once per page', () => {
    for (const [name, html] of site.files) {
      const ids = [...html.matchAll(/ id="([^"]+)"/g)].map((m) => m[1]);
      expect(ids.filter((id, i) => ids.indexOf(id) !== i), name).toEqual([]);
    }
  });

  it('round every coordinate to two decimals', () => {
    for (const html of site.files.values()) for (const svg of svgs(html).values()) expect(svg).not.toMatch(/="[^"]*\d\.\d{3,}/);
    expect(roundSvg('<path d="M0.123456,10.5L3.14159e-7,2"/>')).toBe('<path d="M0.12,10.5L0,2"/>');
  });

  it('count the statements as the tally of the text report does', () => {
    let out = '';
    main(['specs'], { stdout: (x) => (out += x), stderr: () => {}, env: { NO_COLOR: '1' }, isTTY: false });
    const tally = /(\d+) blocks, (\d+) claims: (\d+) fail, (\d+) thin/.exec(out)!;
    const sum = (k: 'fails' | 'thin' | 'holds') => site.pages.reduce((n, p) => n + p.counts[k], 0);
    expect(site.pages.length).toBe(Number(tally[1]));
    expect(sum('fails') + sum('thin') + sum('holds')).toBe(Number(tally[2]));
    expect(sum('fails')).toBe(Number(tally[3]));
    expect(sum('thin')).toBe(Number(tally[4]));
  });

  it('state the failing claims of vcm-buffer as the text report does', () => {
    const p = site.pages.find((x) => x.block === 'strand-vcm-buffer')!;
    expect(p.counts).toEqual({ fails: 3, thin: 0, holds: 3 });
    expect(p.rows.filter((r) => r.verdict === 'fails').map((r) => `${r.key}:${r.line}`)).toEqual(['gbw:22', 'phase_margin:24', 'input_noise:26']);
  });

  it('mark the large-signal settling time where a step is stated, inside the span drawn', () => {
    const text = readFileSync('specs/strand/bridge-preamp.md', 'utf8').replace('  beta: 1\n', '  beta: 1\n  step: 1 V\n');
    const r = checkText('bridge-preamp-step.md', text);
    const fig = r.model!.exact.settling_time;
    expect(fig.method).toBe('transient');
    const one = renderSite([htmlSection(r)]);
    const page = one.pages[0];
    expect(page.step!.largeSettling!.t).toBe(fig.value);
    expect(page.step!.points.at(-1)!.t).toBeGreaterThan(fig.value!);
    // The small-signal settling beside it is shorter: the slewing is what the large step adds.
    expect(page.step!.settling!).toBeLessThan(fig.value!);
    expect(svgs(one.files.get(page.file)!).get('step')).toContain('large step, with slewing');
  });

  // The SVG of two blocks, one with every plot (a loop, a step, noise), one open-loop stage.
  for (const block of ['strand-vcm-buffer', 'strand-mux-gain-stage']) {
    it(`draw ${block} as before (file snapshots)`, async () => {
      const p = site.pages.find((x) => x.block === block)!;
      for (const [id, svg] of svgs(site.files.get(p.file)!)) await expect(svg).toMatchFileSnapshot(`__snapshots__/${block}.${id}.svg`);
    });
  }
});

describe('axis ticks', () => {
  it('are whole decades on a log axis', () => {
    expect(decades(10, 1e4)).toEqual([10, 100, 1000, 1e4]);
  });
  it('are 1, 2 or 5 times a power of ten on a linear axis', () => {
    expect(niceTicks(0, 1.4e-7, 8)).toEqual([0, 2e-8, 4e-8, 6e-8, 8e-8, 1e-7, 1.2e-7, 1.4e-7]);
    expect(niceTicks(-50, 105, 8)).toEqual([-40, -20, 0, 20, 40, 60, 80, 100]);
  });
});
