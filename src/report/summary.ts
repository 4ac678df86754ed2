import type { FileResult } from '../check';

export interface Summary {
  files: number;
  errors: number;
  warnings: number;
  /** Findings accepted by a waiver (not counted as errors or warnings). */
  waived: number;
}

/** Counts the files that are specs (skipped pages are not counted). */
export function summarize(results: FileResult[]): Summary {
  let errors = 0;
  let warnings = 0;
  let waived = 0;
  for (const r of results) {
    for (const f of r.findings) {
      if (f.waived) waived++;
      else if (f.severity === 'error') errors++;
      else if (f.severity === 'warning') warnings++;
    }
  }
  return { files: results.filter((r) => !r.skipped).length, errors, warnings, waived };
}

export const CAUTION =
  'Figures are first-order small-signal estimates from the stated parameters; they do not replace transistor-level simulation across process, voltage and temperature, nor your sign-off procedures.';
