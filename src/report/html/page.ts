// The review pages as HTML text: one self-contained page per block (inline
// CSS and SVG, no script, no network) and the index of blocks. Light and dark
// by prefers-color-scheme; prints on A4 or Letter.

import { formatQuantity } from '../../quantity';
import { CAUTION } from '../summary';
import type { BlockPage, RootRow } from './page-data';
import type { Plotter } from './plots';

export const esc = (s: string): string => s.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&quot;');

const CSS = `
:root{color-scheme:light dark;--bg:#fff;--fg:#1b1f24;--muted:#57606a;--line:#d0d7de;--panel:#f6f8fa;
--open:#0b63c4;--loop:#7a3fc2;--closed:#0f7b4f;--corner:#b35c00;--step:#0b63c4;--noise:#0f7b4f;
--mark:#c2185b;--claim:#8a5a00;--fails:#b42318;--thin:#8a5a00;--holds:#1a7f37;--failbg:#fdecea}
@media screen and (prefers-color-scheme:dark){:root{--bg:#0f1216;--fg:#e6edf3;--muted:#9aa5b1;--line:#30363d;--panel:#161b22;
--open:#58a6ff;--loop:#c297ff;--closed:#3fcf8e;--corner:#f0a04b;--step:#58a6ff;--noise:#3fcf8e;
--mark:#ff7eb6;--claim:#e3b341;--fails:#ff7b72;--thin:#e3b341;--holds:#3fb950;--failbg:#2d1214}}
*{box-sizing:border-box}
body{margin:0;background:var(--bg);color:var(--fg);font:15px/1.45 system-ui,-apple-system,"Segoe UI",Roboto,sans-serif}
main{max-width:1100px;margin:0 auto;padding:16px 20px 48px}
a{color:var(--open)}
h1{font-size:1.5em;margin:.2em 0 .1em}h2{font-size:1.2em;margin:1.6em 0 .5em;border-bottom:1px solid var(--line);padding-bottom:.2em}
h3{font-size:1em;margin:1.2em 0 .3em}
.meta{color:var(--muted);margin:.2em 0}.meta code{color:var(--fg)}
.caution{background:var(--panel);border-left:4px solid var(--claim);padding:8px 12px;margin:12px 0;font-size:.92em}
.counts span{display:inline-block;margin-right:1em}
.v-fails{color:var(--fails);font-weight:600}.v-thin{color:var(--thin);font-weight:600}.v-holds{color:var(--holds)}
.scroll{overflow-x:auto}td.zero{color:var(--muted)}
table{border-collapse:collapse;width:100%;font-size:.9em;font-variant-numeric:tabular-nums}
th,td{border-bottom:1px solid var(--line);padding:4px 6px;text-align:left;vertical-align:top}
th{background:var(--panel);font-weight:600}
tr.fails>td{background:var(--failbg)}
td.fix{padding-left:24px;color:var(--fg);font-size:.95em}
td.fix ul{margin:.2em 0;padding-left:1.2em}
td.place{white-space:nowrap}
.waiver{color:var(--muted);font-style:italic}
figure{margin:8px 0 16px;break-inside:avoid;page-break-inside:avoid;overflow-x:auto}
figure svg{width:100%;height:auto;max-width:720px;min-width:560px;overflow:visible}
figcaption{color:var(--muted);font-size:.88em;max-width:720px}
.legend{list-style:none;padding:0;margin:4px 0;font-size:.88em;display:flex;flex-wrap:wrap;gap:4px 16px}
.legend i{display:inline-block;width:22px;height:0;border-top:3px solid;vertical-align:middle;margin-right:6px}
.pz{display:flex;flex-wrap:wrap;gap:16px;align-items:flex-start}.pz figure{flex:1 1 460px;min-width:0}.pz .roots{flex:1 1 300px}
.c-open{stroke:var(--open)}.c-loop{stroke:var(--loop)}.c-closed{stroke:var(--closed)}
.c-corner-open{stroke:var(--corner);stroke-dasharray:6 4}.c-corner-loop{stroke:var(--corner);stroke-dasharray:2 3}
.c-step{stroke:var(--step)}.c-noise{stroke:var(--noise)}
.m-zero{stroke:var(--muted)}
.mk-crossover{fill:var(--mark);stroke:var(--bg)}.mk-unity{fill:var(--open);stroke:var(--bg)}
.mk-margin{stroke:var(--mark)}.mk-text{fill:var(--mark);font-weight:600}
.mk-claim{stroke:var(--claim)}.mk-claim-text{fill:var(--claim)}.mk-claim-dot{fill:var(--claim);stroke:var(--bg)}
.mk-band{stroke:var(--muted)}
.pz-pole{stroke:var(--open)}.pz-zero{stroke:var(--closed);fill:none}.pz-closed{stroke:var(--mark);fill:none}
dl.deriv dt{font-weight:600;margin-top:.8em}dl.deriv dd{margin:.1em 0 .1em 1.2em}
.method{color:var(--muted);font-size:.9em}
nav{font-size:.9em;margin-bottom:8px}
@page{size:auto;margin:14mm}
@media print{body{font-size:10.5pt;background:#fff;color:#000}main{max-width:none;padding:0}nav{display:none}figure{overflow:visible}figure svg{min-width:0}
.scroll{overflow:visible}h2{break-after:avoid}tr{break-inside:avoid}figure svg{max-width:100%}}
@media (max-width:640px){main{padding:10px}body{font-size:14px}th,td{padding:3px 4px}
#claims thead{display:none}#claims tr{display:block;border-bottom:1px solid var(--line);padding:4px 0}
#claims td{display:block;border:none;padding:1px 4px}#claims td[data-label]::before{content:attr(data-label) ": ";font-weight:600;color:var(--muted)}
#claims td.fix{padding-left:12px}td.place{white-space:normal}}
`;

function shell(title: string, body: string): string {
  return `<!doctype html>
<html lang="en">
<head>
<meta charset="utf-8">
<meta name="viewport" content="width=device-width, initial-scale=1">
<meta name="color-scheme" content="light dark">
<title>${esc(title)}</title>
<style>${CSS}</style>
</head>
<body>
<main>
${body}
</main>
</body>
</html>
`;
}

const verdictWord = { fails: 'fails', thin: 'thin margin', holds: 'holds' };

const counts = (c: BlockPage['counts']): string =>
  `<span class="v-fails">${c.fails} failing</span> <span class="v-thin">${c.thin} thin</span> <span class="v-holds">${c.holds} holding</span> <span class="method">(statements: a typ and a bound of one claim count apart)</span>`;
/** A count cell, dimmed at zero. */
const countCell = (n: number, cls: string): string => `<td class="${n ? cls : 'zero'}">${n}</td>`;

function claimsTable(p: BlockPage): string {
  if (!p.rows.length) return '<p>The block states no claims.</p>';
  const head = ['Claim', 'Stated in', 'Stated', 'Exact model', 'Worst corner', 'Hand estimate', 'Hand error', 'Verdict', 'Place'];
  // Each cell names its column, for the narrow layout where a row is a card.
  const cell = (i: number, html: string, cls = '') => `<td data-label="${head[i]}"${cls ? ` class="${cls}"` : ''}>${html}</td>`;
  const rows = p.rows.map((r) => {
    const waivers = r.waivers.map((w) => `<div class="waiver">waived: ${esc(w.reason)}${w.expires ? ` (until ${esc(w.expires)})` : ''}</div>`).join('');
    const main = `<tr class="${r.verdict}" data-claim="${esc(r.key)}" data-line="${r.line}" data-column="${r.column}" data-verdict="${r.verdict}" data-exact="${r.exactValue ?? ''}" data-unit="${esc(r.unit)}">
${cell(0, `<code>${esc(r.key)}</code>`)}${cell(1, esc(r.where))}${cell(2, esc(r.stated))}${cell(3, esc(r.exact))}${cell(4, esc(r.worst))}${cell(5, esc(r.hand))}${cell(6, esc(r.handError))}${cell(7, `${verdictWord[r.verdict]}${waivers}`, `v-${r.verdict}`)}${cell(8, `<code>${esc(p.path)}:${r.line}</code>`, 'place')}</tr>`;
    const fixes = r.fixes.length ? `\n<tr class="fixes"><td class="fix" colspan="9">What would make it hold:<ul>${r.fixes.map((f) => `<li>${esc(f)}</li>`).join('')}</ul></td></tr>` : '';
    return main + fixes;
  });
  return `<div class="scroll"><table id="claims" aria-label="Claims of ${esc(p.block)}">
<thead><tr>${head.map((h) => `<th scope="col">${h}</th>`).join('')}</tr></thead>
<tbody>
${rows.join('\n')}
</tbody></table></div>`;
}

const rootCell = (r: RootRow): string => {
  const re = formatQuantity(r.re, 'frequency').replace('-', '−');
  if (r.im === 0) return `${re}`;
  return `${re} ${r.im >= 0 ? '+' : '−'} j${formatQuantity(Math.abs(r.im), 'frequency')}`;
};

function rootsTable(p: BlockPage): string {
  const group = (name: string, rs: RootRow[]) =>
    rs.map((r) => `<tr><td>${name}</td><td>${rootCell(r)}</td><td>${formatQuantity(r.hz, 'frequency')}</td><td>${r.q !== undefined ? r.q.toPrecision(3) : '—'}</td><td>${r.re > 0 ? 'right (unstable / RHP)' : 'left'}</td></tr>`).join('\n');
  return `<table class="roots" aria-label="Roots of ${esc(p.block)}"><thead><tr><th scope="col">Root</th><th scope="col">s/2π</th><th scope="col">|s|/2π</th><th scope="col">Q</th><th scope="col">Half-plane</th></tr></thead><tbody>
${[group('pole of A', p.poles), group('zero of A', p.zeros), group('closed-loop pole', p.closedPoles)].filter(Boolean).join('\n')}
</tbody></table>`;
}

const legendItem = (cls: string, text: string, dash = ''): string => `<li><i style="border-color:var(--${cls})${dash ? `;border-top-style:${dash}` : ''}"></i>${esc(text)}</li>`;

function bodeSection(p: BlockPage, plotter: Plotter): string {
  const b = p.bode;
  if (!b) return '<h2 id="s-bode">Frequency response</h2><p>The response could not be evaluated.</p>';
  const { magnitude, phase } = plotter.bode(b, p.block);
  const legend = [
    legendItem('open', 'A(jω), open loop'),
    b.loop ? legendItem('loop', `β·A(jω), loop gain (β = ${+b.beta!.toPrecision(3)})`) : '',
    b.closed ? legendItem('closed', 'closed loop, signal gain') : '',
    b.corner ? legendItem('corner', `worst corner: ${b.corner.label}`, 'dashed') : '',
    b.crossover ? '<li><span class="mk-text" style="color:var(--mark)">●</span> crossover, margins</li>' : '',
    b.claimedGbw.length || b.claimedPm.length || b.claimedGm.length || b.claimedBw.length ? '<li><span style="color:var(--claim)">┆</span> stated claims</li>' : '',
  ].filter(Boolean).join('');
  const closedNote = b.closedWhy ? `<p class="method">No closed-loop curve: ${esc(b.closedWhy)}.</p>` : '';
  return `<h2 id="s-bode">Frequency response</h2>
<ul class="legend">${legend}</ul>
<figure>${magnitude}<figcaption>Magnitude. ${b.crossover ? `Loop crossover f_c = ${formatQuantity(b.crossover.f, 'frequency')}.` : ''} ${b.gainMargin ? `Gain margin ${formatQuantity(b.gainMargin.db, 'gain')} at ${formatQuantity(b.gainMargin.f, 'frequency')}.` : ''}</figcaption></figure>
<figure>${phase}<figcaption>Phase. ${b.crossover ? `Phase margin ${formatQuantity(b.crossover.pm, 'angle')} at f_c.` : ''}</figcaption></figure>
${closedNote}`;
}

function derivations(p: BlockPage): string {
  const items = p.derivations.map((d) => {
    const notes = d.notes.map((n) => `<dd class="method">note: ${esc(n)}</dd>`).join('');
    const hand = d.hand ? `<dd>Hand estimate: <strong>${esc(d.hand.value)}</strong> — ${esc(d.hand.how)}${d.hand.where ? `, with ${esc(d.hand.where)}` : ''}</dd>${d.hand.notes.map((n) => `<dd class="method">note: ${esc(n)}</dd>`).join('')}` : '';
    return `<dt id="d-${esc(d.key)}"><code>${esc(d.key)}</code>${d.claimed ? '' : ' <span class="method">(not claimed)</span>'} = ${esc(d.exact)}</dt><dd>${esc(d.how)} <span class="method">[${esc(d.method)}]</span></dd>${notes}${hand}`;
  });
  return `<h2 id="s-derivation">Derivation of every figure</h2><dl class="deriv">${items.join('\n')}</dl>`;
}

/** One block's page. */
export function blockHtml(p: BlockPage, plotter: Plotter): string {
  const parts: string[] = [];
  parts.push(`<nav><a href="index.html">← all blocks</a></nav>`);
  parts.push(`<h1>${esc(p.block)}</h1>`);
  if (p.title) parts.push(`<p class="meta">${esc(p.title)}</p>`);
  parts.push(`<p class="meta"><code>${esc(p.path)}</code> · topology <code>${esc(p.topology)}</code>${p.topologyTitle ? ` (${esc(p.topologyTitle)})` : ''}${p.point ? ` · at ${esc(p.point)}` : ''}${p.stability ? ` · closed loop <strong>${esc(p.stability)}</strong>` : ''}</p>`);
  parts.push(`<p class="counts">${counts(p.counts)}</p>`);
  parts.push(`<p class="caution" role="note">${esc(CAUTION)}</p>`);
  if (p.error) {
    parts.push(`<h2>Cannot be evaluated</h2><pre>${esc(p.error)}</pre>`);
    return shell(`${p.block} — polecheck review`, parts.join('\n'));
  }
  parts.push(`<h2 id="s-claims-heading">Claims</h2>`, claimsTable(p));
  parts.push(bodeSection(p, plotter));
  const pz = plotter.poleZero(p);
  parts.push(`<h2 id="s-roots">Poles and zeros</h2><div class="pz">${pz ? `<figure>${pz}<figcaption>× poles of A(s), ○ zeros of A(s)${p.closedPoles.length ? ', □ closed-loop poles' : ''}; symmetric-log axes.</figcaption></figure>` : ''}<div class="roots scroll">${rootsTable(p)}</div></div>`);
  if (p.step) parts.push(`<h2 id="s-step">Step response</h2><figure>${plotter.step(p.step, p.block)}<figcaption>Small-signal step of the closed loop; dashed: the settling band.${p.step.largeSettling ? ` A large step, as stated: ${esc(p.step.largeSettling.how)}.` : ''}</figcaption></figure><figure>${plotter.settling(p.step, p.block)}<figcaption>The same response as its distance from the final value, on a log axis: the settling band and the last exit from it.</figcaption></figure>`);
  else if (p.stepWhy) parts.push(`<h2 id="s-step">Step response</h2><p>No step response: ${esc(p.stepWhy)}.</p>`);
  if (p.noise) parts.push(`<h2 id="s-noise">Noise</h2><figure>${plotter.noise(p.noise, p.block)}<figcaption>Input-referred voltage noise density.</figcaption></figure>`);
  parts.push(derivations(p));
  if (p.caveats.length || p.notes.length) parts.push(`<h2 id="s-caveats">Caveats and other findings</h2><ul>${[...p.caveats.map((c) => `<li>caveat: ${esc(c)}</li>`), ...p.notes.map((n) => `<li>${esc(n)}</li>`)].join('')}</ul>`);
  parts.push(`<p class="caution" role="note">${esc(CAUTION)}</p>`);
  return shell(`${p.block} — polecheck review`, parts.join('\n'));
}

/** The index of every block, linked to its page. */
export function indexHtml(pages: BlockPage[]): string {
  const total = { fails: 0, thin: 0, holds: 0 };
  for (const p of pages) for (const k of ['fails', 'thin', 'holds'] as const) total[k] += p.counts[k];
  const rows = pages.map((p) => `<tr data-block="${esc(p.block)}"><td><a href="${esc(p.file)}">${esc(p.block)}</a></td><td>${esc(p.title)}</td><td><code>${esc(p.topology)}</code></td><td>${esc(p.point)}${p.stability ? ` · loop ${esc(p.stability)}` : ''}</td>${countCell(p.counts.fails, 'v-fails')}${countCell(p.counts.thin, 'v-thin')}${countCell(p.counts.holds, 'v-holds')}<td><code>${esc(p.path)}</code></td></tr>`);
  const body = `<h1>Review of ${pages.length} block${pages.length === 1 ? '' : 's'}</h1>
<p class="counts">${counts(total)}</p>
<p class="caution" role="note">${esc(CAUTION)}</p>
<div class="scroll"><table id="blocks" aria-label="Blocks"><thead><tr><th scope="col">Block</th><th scope="col">Title</th><th scope="col">Topology</th><th scope="col">Operating point</th><th scope="col">Failing</th><th scope="col">Thin</th><th scope="col">Holding</th><th scope="col">File</th></tr></thead><tbody>
${rows.join('\n')}
</tbody></table></div>`;
  return shell('polecheck review', body);
}
