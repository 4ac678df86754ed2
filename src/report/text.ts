// The text report: grouped by file, one finding a line with its place,
// severity, message and rule id, suggestions beneath.

import type { FileResult } from '../check';
import type { Finding } from '../findings';
import type { Paint } from './style';
import { CAUTION, summarize } from './summary';

const mark = (f: Finding, p: Paint): string =>
  f.severity === 'error' ? p.red('error  ') : f.severity === 'warning' ? p.yellow('warning') : p.blue('info   ');

export function textReport(results: FileResult[], p: Paint, opts: { quiet?: boolean } = {}): string {
  const lines: string[] = [];
  for (const r of results) {
    const shown = r.findings.filter((f) => !opts.quiet || (f.severity === 'error' && !f.waived));
    if (r.skipped || shown.length === 0) continue;
    lines.push(p.bold(r.path));
    for (const f of shown) {
      const tag = f.waived ? p.dim('waived ') : mark(f, p);
      lines.push(`  ${p.dim(`${f.line}:${f.column}`.padEnd(7))} ${tag} ${f.message}  ${p.dim(f.rule)}`);
      if (f.waived) lines.push(`           ${p.dim(`waived at line ${f.waived.line}${f.waived.expires ? ` until ${f.waived.expires}` : ''}: ${f.waived.reason}`)}`);
      for (const s of f.suggestions) lines.push(`           ${p.dim('→')} ${s}`);
      for (const rel of f.related ?? []) lines.push(`           ${p.dim(`${rel.line}:${rel.column}`)} ${rel.message}`);
    }
    lines.push('');
  }
  const s = summarize(results);
  const count = (n: number, w: string) => `${n} ${w}${n === 1 ? '' : 's'}`;
  const tally = `${count(s.files, 'spec')} checked: ${count(s.errors, 'error')}, ${count(s.warnings, 'warning')}${s.waived ? `, ${s.waived} waived` : ''}`;
  lines.push(s.errors ? p.red(tally) : s.warnings ? p.yellow(tally) : p.green(tally));
  if (s.files > 0) lines.push(p.dim(CAUTION));
  return `${lines.join('\n')}\n`;
}
