// File-system edge cases at scale: a folder of thousands of files, and files
// that disappear or change between discovery and reading.
import { mkdirSync, mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { checkFile, discover, main } from '../../src/cli';

const SPEC = `---
polecheck: 1
block: strand-files-test
topology: single-stage
params:
  gm: 800 µS
  rout: 8 MΩ
  cout: 150 fF
conditions:
  cl: 3 pF
claims:
  dc_gain: 76 dB
---
`;

describe('many files and files that change under the run', () => {
  it('checks a folder of 3,000 files (40 specs among pages) in stable order, skipping the pages', () => {
    const dir = mkdtempSync(join(tmpdir(), 'polecheck-many-'));
    for (let i = 0; i < 3000; i++) {
      const sub = join(dir, `d${i % 30}`);
      mkdirSync(sub, { recursive: true });
      writeFileSync(join(sub, `p${String(i).padStart(4, '0')}.md`), i % 75 === 0 ? SPEC : `# Page ${i}\n\nNot a spec.\n`);
    }
    const files = discover([dir]);
    expect(files).toHaveLength(3000);
    expect([...files].sort()).toEqual(files);
    let out = '';
    const status = main(['--format', 'json', dir], { stdout: (s) => (out += s), stderr: () => {}, env: {}, isTTY: false });
    const report = JSON.parse(out);
    expect(status).toBe(0);
    expect(report.summary).toMatchObject({ files: 40, errors: 0 });
    expect(report.files.filter((f: { skipped: boolean }) => f.skipped)).toHaveLength(2960);
  });

  it('reports a file deleted after discovery as unreadable and goes on with the others', () => {
    const dir = mkdtempSync(join(tmpdir(), 'polecheck-gone-'));
    writeFileSync(join(dir, 'a.md'), SPEC);
    writeFileSync(join(dir, 'b.md'), SPEC);
    const files = discover([dir]);
    rmSync(join(dir, 'a.md'));
    const results = files.map((f) => checkFile(f, 5 * 1024 * 1024));
    expect(results[0].findings.map((f) => [f.rule, f.severity, f.line, f.column])).toEqual([['read-error', 'error', 1, 1]]);
    expect(results[0].findings[0].message).toMatch(/ENOENT/);
    expect(results[1].findings).toEqual([]);
  });

  it('reads a file replaced by a directory, or by a bigger file, without failing the run', () => {
    const dir = mkdtempSync(join(tmpdir(), 'polecheck-swap-'));
    writeFileSync(join(dir, 'a.md'), SPEC);
    const [file] = discover([dir]);
    rmSync(file);
    mkdirSync(file);
    expect(checkFile(file, 1 << 20).findings.map((f) => f.rule)).toEqual(['read-error']);
    rmSync(file, { recursive: true });
    writeFileSync(file, SPEC + 'x'.repeat(2 << 20));
    expect(checkFile(file, 1 << 20).findings.map((f) => f.rule)).toEqual(['file-too-large']);
  });
});
