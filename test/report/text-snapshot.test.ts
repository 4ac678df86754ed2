// The text report (the review sheet) of the demo design repository, as a user
// sees it: without colour (a pipe, NO_COLOR) and with it (FORCE_COLOR), kept
// as file snapshots so that any change of layout or wording shows in review.
// The figures in it are checked elsewhere (test/demo.test.ts against the
// expected findings, test/reference against ngspice); here the layout is.
import { describe, expect, it } from 'vitest';
import { main } from '../../src/cli';

function sheet(env: NodeJS.ProcessEnv): { status: number; out: string } {
  let out = '';
  const status = main(['specs/'], { stdout: (s) => (out += s), stderr: (s) => (out += s), env: { POLECHECK_WORKERS: '0', ...env }, isTTY: false, cwd: process.cwd() });
  return { status, out };
}

// SGR sequences, as the paint helpers write them.
const ANSI = /\u001b\[[0-9;]*m/g;

describe('the text report of the demo repository', () => {
  const plain = sheet({ NO_COLOR: '1' });
  const colour = sheet({ FORCE_COLOR: '1' });

  it('without colour', async () => {
    expect(plain.status).toBe(1); // two demo blocks carry stale figures on purpose
    expect(plain.out).not.toMatch(ANSI);
    await expect(plain.out).toMatchFileSnapshot('__snapshots__/demo-text.txt');
  });

  it('with colour (FORCE_COLOR): the same text, painted', async () => {
    expect(colour.status).toBe(1);
    expect(colour.out).toMatch(ANSI);
    expect(colour.out.replace(ANSI, '')).toBe(plain.out);
    await expect(colour.out).toMatchFileSnapshot('__snapshots__/demo-text.ansi');
  });

  it('places every row as path:line:col relative to where it ran, and ends with the tally and the caution once', () => {
    // A row whose name is too long for the column carries its figures on the next line.
    const lines = plain.out.split('\n');
    const rows = lines.flatMap((l, i) => (/^ {2}(fails|thin  |waived)/.test(l) ? [/:\d+:\d+$/.test(l) ? l : `${l} ${lines[i + 1].trim()}`] : []));
    expect(rows.length).toBeGreaterThan(0);
    expect(rows.some((r) => r.includes('(Settling time to 0.1 %'))).toBe(true);
    for (const r of rows) expect(r).toMatch(/ specs\/[\w/-]+\.md:\d+:\d+$/);
    const tail = plain.out.trimEnd().split('\n').slice(-2);
    expect(tail[0]).toMatch(/^\d+ blocks, \d+ claims: \d+ fail, \d+ thin; \d+ warnings/);
    expect(tail[1]).toMatch(/^Figures are first-order small-signal estimates/);
    expect(plain.out.match(/first-order small-signal estimates/g)).toHaveLength(1);
  });
});
