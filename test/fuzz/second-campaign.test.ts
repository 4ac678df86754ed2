// Regression tests for the second robustness campaign (issue 17): every
// reproducer it lists, each checked against something outside the code under
// test where there is one — js-yaml's own reading of the restated front
// matter (the YAML 1.2 reference semantics as the library implements them),
// the file system's own view of links, modes and inodes (lstat/stat), and
// the bytes of the file. Speed is measured by bench/hostile.mjs (printed,
// never asserted); here the hostile documents are checked for what they must
// yield, within vitest's timeout.
import { execFileSync } from 'node:child_process';
import { chmodSync, linkSync, lstatSync, mkdirSync, mkdtempSync, readFileSync, readlinkSync, statSync, symlinkSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { load } from 'js-yaml';
import { describe, expect, it } from 'vitest';
import { checkText } from '../../src/check';
import { main } from '../../src/cli';
import { readSpecFile } from '../../src/cli/discover';
import { applyEdits, planFixes, restatedProblem } from '../../src/fixes/restate';
import { readDocument } from '../../src/pipeline';
import { portablePath } from '../../src/report/sarif';
import { textReport } from '../../src/report/text';
import { paint } from '../../src/report/style';
import { HOSTILE, ladder, twoStage } from './hostile-docs';

/** The front matter's mapping as js-yaml reads it. */
const frontMatter = (text: string): Record<string, unknown> => load(text.replace(/\r\n/g, '\n').split('\n---\n')[0].replace(/^---\n/, '')) as Record<string, unknown>;

function restated(text: string): { out: string; edits: ReturnType<typeof planFixes> } {
  const edits = planFixes(checkText('t.md', text), text, { bounds: true });
  return { out: applyEdits(text, edits, 0), edits };
}

function run(args: string[], cwd: string) {
  let stdout = '';
  let stderr = '';
  const status = main(args, { stdout: (s) => (stdout += s), stderr: (s) => (stderr += s), env: {}, isTTY: false, cwd });
  return { status, stdout, stderr };
}

const tmp = () => mkdtempSync(join(tmpdir(), 'polecheck-17-'));

describe('restating edits the YAML source form it finds', () => {
  // The model's GBW of twoStage() is about 23 MHz; each form states 40 MHz.
  const forms: Array<[string, string]> = [
    ['plain', '  gbw: 40 MHz\n'],
    ['single-quoted', "  gbw: '40 MHz'\n"],
    ['double-quoted with an escape', '  gbw: "40 \\x4dHz"\n'],
    ['flow mapping', '  gbw: {typ: 40 MHz}\n'],
    ['plain over two lines', '  gbw: 40\n    MHz\n'],
    ['literal |', '  gbw: |\n    40 MHz\n  p1: 10 Hz\n'],
    ['literal |-', '  gbw: |-\n    40 MHz\n'],
    ['literal |+ with a trailing blank line', '  gbw: |+\n    40 MHz\n\n'],
    ['folded >', '  gbw: >\n    40 MHz\n'],
    ['folded >- over two lines', '  gbw: >-\n    40\n    MHz\n'],
    ['literal with indentation indicator |2', '  gbw: |2\n     40 MHz\n'],
    ['folded with indicator and chomping >2-', '  gbw: >2-\n     40 MHz\n'],
  ];
  for (const [name, claims] of forms) {
    for (const eol of ['\n', '\r\n']) {
      it(`${name}, ${eol === '\n' ? 'LF' : 'CRLF'}: the file still parses, gbw reads the new value, every other byte kept`, () => {
        const text = twoStage(claims).replace(/\n/g, eol);
        const { out, edits } = restated(text);
        const gbw = edits.find((e) => e.claim === 'gbw')!;
        expect(gbw).toBeDefined();
        expect(restatedProblem(text, out, edits)).toBeUndefined();
        // js-yaml reads the restated front matter; gbw's value is the new text (a block scalar keeps its chomping).
        const before = frontMatter(text).claims as Record<string, unknown>;
        const after = frontMatter(out).claims as Record<string, unknown>;
        const value = (v: unknown) => (typeof v === 'object' && v ? (v as { typ: string }).typ : (v as string));
        expect(value(after.gbw).trim().replace(/\s+/g, ' ')).toBe(gbw.text);
        expect(value(after.gbw).replace(/\S[^\n]*\S|\S/, 'X')).toBe(value(before.gbw).replace(/\S[\s\S]*\S|\S/, 'X'));
        // Nothing outside the edited spans changed.
        let at = 0;
        let rest = '';
        for (const e of edits) (rest += text.slice(at, e.start)), (at = e.end);
        rest += text.slice(at);
        let atOut = 0;
        let restOut = '';
        let shift = 0;
        for (const e of edits) (restOut += out.slice(atOut, e.start + shift)), (atOut = e.start + shift + e.text.length), (shift += e.text.length - (e.end - e.start));
        restOut += out.slice(atOut);
        expect(restOut).toBe(rest);
      });
    }
  }

  it('an alias is never restated (the edit would change the anchor and every other use)', () => {
    const text = twoStage('  p1: &f 10 Hz\n  gbw: *f\n');
    const f = checkText('t.md', text).findings.find((x) => x.claim === 'gbw' && x.verdict)!;
    const r = f.fixes?.find((x) => x.kind === 'restate');
    expect(r && r.kind === 'restate' && r.edit).toBeNull();
  });

  it('an empty block scalar is reported at its indicator, within its line', () => {
    const text = '---\npolecheck: 1\ntopology: single-stage\nparams:\n  gm: 800 µS\n  rout: 8 MΩ\n  cout: |\nclaims:\n  gbw: 849 MHz\n---\n';
    const f = checkText('t.md', text).findings.find((x) => x.message.includes('cout'))!;
    const line = text.split('\n')[f.line - 1];
    expect(line).toBe('  cout: |');
    expect(f.column).toBeLessThanOrEqual(line.length);
    expect(line[f.column - 1]).toBe('|');
  });
});

describe('table cells are edited by their raw source, or refused with the reason', () => {
  const table = (cell: string, unit = true) => twoStage('  dc_gain: {min: 60 dB}\n', `\n| Parameter | Typ |${unit ? ' Unit |' : ''}\n|---|---|${unit ? '---|' : ''}\n| GBW | ${cell} |${unit ? ' MHz |' : ''}\n`);
  for (const [cell, unit, why] of [
    ['\\+40', true, /backslash escape/],
    ['40&nbsp;MHz', false, /HTML entity/],
    ['&#52;0', true, /HTML entity/],
    ['`40 MHz`', false, /Markdown markup/],
  ] as const) {
    it(`\`${cell}\`: not edited at decoded offsets; the restatement says why`, () => {
      const text = table(cell, unit);
      const r = checkText('t.md', text);
      const f = r.findings.find((x) => x.claim === 'gbw' && x.verdict?.outcome === 'fails')!;
      expect(f).toBeDefined();
      const fix = f.fixes?.find((x) => x.kind === 'restate');
      expect(fix && fix.kind === 'restate' && fix.edit).toBeNull();
      expect(fix && fix.kind === 'restate' && fix.refused).toMatch(why);
      expect(planFixes(r, text, { bounds: true })).toEqual([]);
    });
  }
  it('a plain cell is edited at its own offsets (Unit column: the number only)', () => {
    const text = table('40');
    const { out, edits } = restated(text);
    expect(edits).toHaveLength(1);
    expect(out).toMatch(/\| GBW \| 2\d(\.\d+)? \| MHz \|\n/);
  });
});

describe('writes: links, modes, read-only files, one file under two names', () => {
  const stale = twoStage('  gbw: 40 MHz\n');
  it('a symbolic link is followed: the target is restated, the link stays a link', () => {
    const dir = tmp();
    writeFileSync(join(dir, 'target.md'), stale);
    symlinkSync('target.md', join(dir, 'link.md'));
    const r = run(['--restate', 'link.md'], dir);
    expect(r.stderr).toMatch(/fixed 1 claim in link\.md/);
    expect(lstatSync(join(dir, 'link.md')).isSymbolicLink()).toBe(true);
    expect(readlinkSync(join(dir, 'link.md'))).toBe('target.md');
    expect(readFileSync(join(dir, 'target.md'), 'utf8')).toMatch(/gbw: 2\d(\.\d+)? MHz/);
  });
  it('a hard link is kept: both names still share one inode holding the restated text', () => {
    const dir = tmp();
    writeFileSync(join(dir, 'a.md'), stale);
    linkSync(join(dir, 'a.md'), join(dir, 'b.md'));
    const ino = statSync(join(dir, 'a.md')).ino;
    const r = run(['--restate', 'a.md'], dir);
    expect(r.status).not.toBe(2);
    expect(statSync(join(dir, 'a.md')).ino).toBe(ino);
    expect(statSync(join(dir, 'b.md')).ino).toBe(ino);
    expect(statSync(join(dir, 'a.md')).nlink).toBe(2);
    expect(readFileSync(join(dir, 'b.md'), 'utf8')).toMatch(/gbw: 2\d(\.\d+)? MHz/);
    expect(execFileSync('ls', ['-a', dir], { encoding: 'utf8' }).split('\n').filter((n) => n.includes('polecheck'))).toEqual([]);
  });
  it('the file mode is kept exactly (not masked by the umask)', () => {
    const dir = tmp();
    writeFileSync(join(dir, 'a.md'), stale);
    chmodSync(join(dir, 'a.md'), 0o664);
    run(['--restate', 'a.md'], dir);
    expect(statSync(join(dir, 'a.md')).mode & 0o7777).toBe(0o664);
    expect(readFileSync(join(dir, 'a.md'), 'utf8')).toMatch(/gbw: 2\d(\.\d+)? MHz/);
  });
  it('a read-only file is refused with a clear error and left as it was', () => {
    const dir = tmp();
    writeFileSync(join(dir, 'a.md'), stale);
    chmodSync(join(dir, 'a.md'), 0o444);
    const r = run(['--restate', 'a.md'], dir);
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(/cannot write a\.md: the file is read-only/);
    expect(readFileSync(join(dir, 'a.md'), 'utf8')).toBe(stale);
  });
  it('a.md ./a.md and a link to it: restated once, checked and counted once', () => {
    const dir = tmp();
    writeFileSync(join(dir, 'a.md'), stale);
    symlinkSync('a.md', join(dir, 'same.md'));
    const fix = run(['--restate', 'a.md', './a.md', 'same.md'], dir);
    expect(fix.stderr).not.toMatch(/changed while/);
    expect(fix.stderr.match(/fixed/g)).toHaveLength(1);
    writeFileSync(join(dir, 'a.md'), stale);
    const check = run(['--format', 'json', 'a.md', './a.md', 'same.md'], dir);
    expect(JSON.parse(check.stdout).files).toHaveLength(1);
  });
});

describe('only regular files are read, within the size limit', () => {
  it('a FIFO in a folder is skipped with a note; named, it is an error; nothing blocks', () => {
    const dir = tmp();
    execFileSync('mkfifo', [join(dir, 'pipe.md')]);
    writeFileSync(join(dir, 'a.md'), twoStage('  gbw: 23 MHz\n'));
    const r = run(['.'], dir);
    expect(r.stderr).toMatch(/skipped \.\/pipe\.md: a FIFO/);
    const named = run(['--format', 'json', 'pipe.md'], dir);
    expect(named.stdout).toMatch(/a FIFO \(named pipe\), not a regular file/);
    expect(named.status).toBe(1);
  });
  it('a *.md link to /dev/zero is a character device, never read', () => {
    const dir = tmp();
    symlinkSync('/dev/zero', join(dir, 'zero.md'));
    const read = readSpecFile(join(dir, 'zero.md'), 1000);
    expect(read.kind).toBe('done');
    expect(read.kind === 'done' && read.result.findings[0].message).toMatch(/character device/);
    expect(run(['.'], dir).stderr).toMatch(/skipped \.\/zero\.md: a character device/);
  });
  it('a regular file whose stat size is 0 (/proc) is read within the limit', () => {
    const read = readSpecFile('/proc/self/status', 64);
    expect(read.kind).toBe('done'); // not a spec: skipped, after at most 65 bytes
  });
});

describe('discovery', () => {
  it('a spec 600 folders deep is found (folders are known by device and inode, not by resolving their real path)', () => {
    const dir = tmp();
    const deep = join(dir, ...Array.from({ length: 600 }, () => 'd'));
    mkdirSync(deep, { recursive: true });
    writeFileSync(join(deep, 'a.md'), twoStage('  gbw: 23 MHz\n'));
    const r = run(['--format', 'json', '.'], dir);
    expect(JSON.parse(r.stdout).files).toHaveLength(1);
  });
});

describe('no silent skips', () => {
  it('`polecheck: 1` after 64 KiB of front matter is checked', () => {
    const dir = tmp();
    writeFileSync(join(dir, 'a.md'), HOSTILE.find((h) => h.name.startsWith('polecheck: 1 after'))!.make());
    const read = readSpecFile(join(dir, 'a.md'), 5_000_000);
    expect(read.kind).toBe('text');
  });
  const spec = twoStage('  gbw: 23 MHz\n');
  const encodings: Array<[string, Buffer, RegExp]> = [
    ['UTF-16 LE without a byte-order mark', Buffer.from(spec, 'utf16le'), /UTF-16 \(little-endian, without a byte-order mark\)/],
    ['UTF-16 BE without a byte-order mark', Buffer.from(spec, 'utf16le').swap16(), /UTF-16 \(big-endian, without a byte-order mark\)/],
    ['UTF-32 LE with a byte-order mark', utf32(`\ufeff${spec}`, true), /UTF-32 \(little-endian, with a byte-order mark\)/],
    ['UTF-32 BE with a byte-order mark', utf32(`\ufeff${spec}`, false), /UTF-32 \(big-endian, with a byte-order mark\)/],
    ['UTF-32 LE without a byte-order mark', utf32(spec, true), /UTF-32 \(little-endian, without/],
  ];
  for (const [name, bytes, message] of encodings) {
    it(`a spec in ${name} is reported, not skipped`, () => {
      const dir = tmp();
      writeFileSync(join(dir, 'a.md'), bytes);
      const read = readSpecFile(join(dir, 'a.md'), 5_000_000);
      expect(read.kind === 'done' && read.result.skipped).toBe(false);
      expect(read.kind === 'done' && read.result.findings[0].message).toMatch(message);
    });
  }
  it('a file named on the command line and excluded by a parent folder\'s polecheck.yaml (no git): the exclusion is said', () => {
    const dir = tmp();
    writeFileSync(join(dir, 'polecheck.yaml'), 'exclude: ["**"]\n');
    mkdirSync(join(dir, 'sub'));
    writeFileSync(join(dir, 'sub', 'a.md'), twoStage('  gbw: 40 MHz\n'));
    const r = run(['a.md'], join(dir, 'sub'));
    expect(r.stderr).toMatch(/a\.md is not checked: excluded by .*polecheck\.yaml \(exclude: \*\*\)/);
  });
});

describe('output integrity', () => {
  it('a 12-node RC ladder has no finite zero: no spurious rhp_zero, p1 restated with a sensible precision', () => {
    const text = ladder(12, '  p1: 10 Hz\n  rhp_zero: 1 GHz\n');
    const r = checkText('t.md', text);
    // An RC ladder driven through a transconductance: the transfer to the last node has no finite zero
    // (every path from the input crosses every shunt element; textbook ladder-network property).
    expect(r.model!.exact.rhp_zero.value).toBeNull();
    const edits = planFixes(r, text, { bounds: true });
    for (const e of edits) expect(e.text.replace(/\D/g, '').length).toBeLessThanOrEqual(8);
    const p1 = edits.find((e) => e.claim === 'p1');
    if (p1) expect(p1.text).toMatch(/^\d+(\.\d+)? [kMG]?Hz$/);
    for (const f of r.findings) expect(f.message).not.toMatch(/\d{9,}/);
  });
  it('SARIF keeps a backslash in a POSIX file name (percent-encoded), converts it on Windows', () => {
    expect(portablePath('back\\slash.md', 'linux')).toBe('back\\slash.md');
    expect(portablePath('dir\\a.md', 'win32')).toBe('dir/a.md');
  });
  it('the text report escapes line breaks, bidi overrides and zero-width characters from file names and echoed text', () => {
    const name = 'evil\n\u202egnp.md';
    const text = twoStage('  gbw: 40 MHz\n  g\u200bbw: 1 MHz\n');
    const r = checkText(name, text);
    const out = textReport([r], paint(false));
    expect(out).not.toMatch(/[\u202e\u200b]/);
    expect(out).toContain('evil\\n\\u{202e}gnp.md');
    expect(out).toContain('g\\u{200b}bw');
  });
});

describe('hostile documents yield what they must', () => {
  it('a 2,000-row failing table: each suggestion names an affected claim once, the report grows linearly', () => {
    const doc = HOSTILE.find((h) => h.name.startsWith('2,000 failing'))!.make();
    const r = checkText('t.md', doc);
    for (const f of r.findings) for (const s of f.suggestions) expect(s.length).toBeLessThan(2000);
    const size = JSON.stringify(r.findings).length;
    const small = checkText('t.md', twoStage('  gbw: 23 MHz\n', `\n| Parameter | Typ |\n|---|---|\n${'| GBW | 40 MHz |\n'.repeat(200)}`));
    // Ten times the rows: at most about ten times the report (linear), never a hundred (quadratic).
    expect(size / JSON.stringify(small.findings).length).toBeLessThan(15);
  });
  it('100,000 unknown keys: the first hundred named, the rest counted', () => {
    const r = checkText('t.md', HOSTILE.find((h) => h.name.startsWith('100,000 unknown'))!.make());
    const unknown = r.findings.filter((f) => f.rule === 'unknown-key');
    expect(unknown).toHaveLength(101);
    expect(unknown.at(-1)!.message).toMatch(/99900 more unknown keys/);
  });
  it('a network above the node limit is a clear error at its nodes', () => {
    const r = checkText('t.md', ladder(100, '  p1: 10 Hz\n'));
    expect(r.findings.map((f) => f.message).join('\n')).toMatch(/declares 101 nodes; polecheck solves networks of at most 64 nodes/);
  });
  it('a table after 40,000 spaces, a 0.5 MiB paragraph, a line of list markers: the table is still read', () => {
    for (const name of ['40,000 spaces then a table', 'a 0.5 MiB paragraph and a table', 'a line of 4,000 list markers and a table']) {
      const read = readDocument('t.md', HOSTILE.find((h) => h.name === name)!.make());
      expect(read.kind === 'spec' && read.spec?.claims.filter((c) => c.source === 'table')).toHaveLength(1);
    }
  });
  it('a table inside a fenced code block is not a datasheet table', () => {
    const read = readDocument('t.md', twoStage('  gbw: 23 MHz\n', '\n```\n| Parameter | Typ |\n|---|---|\n| GBW | 40 MHz |\n```\n'));
    expect(read.kind === 'spec' && read.spec?.claims.filter((c) => c.source === 'table')).toHaveLength(0);
  });
  it('10,000 table rows: the first 200 table lines are read, and the cut is said', () => {
    const r = checkText('t.md', HOSTILE.find((h) => h.name.startsWith('10,000 identical'))!.make());
    expect(r.findings.some((f) => f.rule === 'table' && /more than 200 lines/.test(f.message))).toBe(true);
  });
});

function utf32(s: string, le: boolean): Buffer {
  const cps = [...s].map((c) => c.codePointAt(0)!);
  const b = Buffer.alloc(cps.length * 4);
  cps.forEach((cp, i) => (le ? b.writeUInt32LE(cp, i * 4) : b.writeUInt32BE(cp, i * 4)));
  return b;
}

describe('the line scan finds the tables Markdown would', () => {
  it('a table inside an HTML comment is not read', () => {
    const read = readDocument('t.md', twoStage('  gbw: 23 MHz\n', '\n<!--\n| Parameter | Typ |\n|---|---|\n| GBW | 40 MHz |\n-->\n'));
    expect(read.kind === 'spec' && read.spec?.claims.filter((c) => c.source === 'table')).toHaveLength(0);
  });
  it('a table after a paragraph, with CRLF line ends, is read at the positions of the file', () => {
    const text = twoStage('  gbw: 23 MHz\n', '\nSome text.\n\n| Parameter | Typ |\n|---|---|\n| GBW | 40 MHz |\n').replace(/\n/g, '\r\n');
    const read = readDocument('t.md', text);
    const rows = read.kind === 'spec' ? read.spec!.claims.filter((c) => c.source === 'table') : [];
    expect(rows).toHaveLength(1);
    const pos = rows[0].typ!.pos;
    expect(text.split('\r\n')[pos.line - 1].slice(pos.column - 1)).toBe('40 MHz |');
  });
});
