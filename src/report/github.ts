// GitHub Actions annotations: one workflow command a finding,
// `::error file=PATH,line=L,col=C,title=polecheck RULE::MESSAGE`, which the
// runner turns into an annotation on the file and line. Escaping follows the
// runner's command syntax: in the message `%`, CR and LF are percent-encoded;
// in a property value `:` and `,` too, since they delimit the properties.

import type { FileResult } from '../check';
import type { Finding } from '../verdicts/findings';
import { portablePath } from './sarif';

/** A command's message: `%` first, so that the escapes themselves are not escaped again. */
export const escapeData = (s: string): string => s.replace(/%/g, '%25').replace(/\r/g, '%0D').replace(/\n/g, '%0A');

/** A property value (file, title): also the `:` and `,` that delimit properties. */
export const escapeProperty = (s: string): string => escapeData(s).replace(/:/g, '%3A').replace(/,/g, '%2C');

// A waived finding is an accepted deviation: shown, but only as a notice.
const command = (f: Finding): 'error' | 'warning' | 'notice' =>
  f.waived ? 'notice' : f.severity === 'error' ? 'error' : f.severity === 'warning' ? 'warning' : 'notice';

export function githubReport(results: FileResult[]): string {
  const lines: string[] = [];
  for (const r of results) {
    if (r.skipped) continue;
    for (const f of r.findings) {
      const props = [
        `file=${escapeProperty(portablePath(r.path))}`,
        `line=${Math.max(1, f.line)}`,
        `col=${Math.max(1, f.column)}`,
        `title=${escapeProperty(`polecheck ${f.rule}`)}`,
      ].join(',');
      const message = [`${f.message}${f.waived ? ` (waived: ${f.waived.reason})` : ''}`, ...f.suggestions.map((s) => `→ ${s}`)].join('\n');
      lines.push(`::${command(f)} ${props}::${escapeData(message)}`);
    }
  }
  return lines.length ? `${lines.join('\n')}\n` : '';
}
