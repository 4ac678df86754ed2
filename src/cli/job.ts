// One file checked and reduced to what the requested output needs: the
// findings, the planned --restate edits, the reviewer report's section. The
// models, operating points and the memo of evaluated models stay behind,
// so a folder of any size holds only findings and text. The outcome is plain
// data, the same whether it was made in this thread or in a worker.

import { type CheckOptions, type FileResult, checkText } from '../check';
import type { Finding } from '../verdicts/findings';
import { type Edit, applyEdits, planFixes, restatedProblem } from '../fixes/restate';
import type { Sheet } from '../report/sheet';

export interface JobSettings {
  check: CheckOptions;
  /** --restate / --preview: plan the edits; with `recheck`, also check the fixed text (its findings stand once it is written). */
  fix?: { bounds: boolean; recheck: boolean };
  /** `report` in the reviewer's format: render each file's section, in colour or not. */
  review?: { color: boolean; html?: boolean };
}

/** A renderer of one file's section of the reviewer report (loaded only for `report`). */
export type Reviewer = (r: FileResult) => string;

export interface Checked {
  path: string;
  skipped: boolean;
  findings: Finding[];
  /** The block's review sheet (plain data), for the text report. */
  sheet?: Sheet;
  /** The file's section of the reviewer report, when asked for. */
  section?: string;
}

export interface Outcome extends Checked {
  /** Present when --restate or --preview has edits for the file. */
  fix?: {
    /** The text as read, which the file must still hold when the fix is written. */
    text: string;
    fixed: string;
    edits: Edit[];
    /** Why the edits are not written: the restated text did not read back as planned. */
    refused?: string;
    /** The fixed text checked, for the report once the fix is written. */
    after?: Checked;
  };
}

function lighten(r: FileResult, review: Reviewer | undefined): Checked {
  const out: Checked = { path: r.path, skipped: r.skipped, findings: r.findings };
  if (r.sheet) out.sheet = r.sheet;
  if (review) out.section = review(r);
  return out;
}

export function checkOne(path: string, text: string, s: JobSettings, review?: Reviewer): Outcome {
  const r = checkText(path, text, s.check);
  const out: Outcome = lighten(r, review);
  if (s.fix && r.spec) {
    // Edits are planned on the text without its byte-order mark and applied to the raw text.
    const bom = text.charCodeAt(0) === 0xfeff;
    const edits = planFixes(r, bom ? text.slice(1) : text, { bounds: s.fix.bounds });
    if (edits.length) {
      const fixed = applyEdits(text, edits, bom ? 1 : 0);
      const refused = restatedProblem(bom ? text.slice(1) : text, bom ? fixed.slice(1) : fixed, edits);
      if (refused) {
        out.fix = { text, fixed: text, edits: [], refused };
        return out;
      }
      out.fix = { text, fixed, edits };
      if (s.fix.recheck) out.fix.after = lighten(checkText(path, fixed, s.check), review);
    }
  }
  return out;
}
