// The report in the requested format. Each writer is imported only when its
// format is asked for (in the bundle its module is then evaluated; the text
// writer, the default, is always at hand), so a plain check does not pay for
// SARIF, GitLab, the reviewer report or diffs.

import { pathToFileURL } from 'node:url';
import { join, resolve } from 'node:path';
import { RULES } from '../../rules';
import type { FileResult } from '../check';
import { paint } from '../report/style';
import * as text from '../report/text';
import { VERSION, type Options } from './args';
import { docsDir, ruleDocs } from './docs';
import type { Checked, Reviewer } from './job';
import { repoRelative, repositoryRoot } from './locations';

/** The writer modules an output may need; only those of the requested format are loaded. */
export interface WriterModules {
  text: typeof import('../report/text');
  json?: typeof import('../report/json');
  sarif?: typeof import('../report/sarif');
  github?: typeof import('../report/github');
  gitlab?: typeof import('../report/gitlab');
  review?: typeof import('../report/review');
  /** `report --html DIR`: the page writer, its plotting library loaded. */
  html?: typeof import('../report/html/writer');
  diff?: typeof import('diff');
}

/** The output could not be written (exit status 2). */
export class OutputError extends Error {}

export type Differ = (path: string, before: string, after: string) => string;

export interface Output {
  /** The whole report, from the files' outcomes in order. */
  render(results: Checked[]): string;
  /** `report` in the reviewer's format: one file's section, rendered as soon as the file is checked. */
  section?: Reviewer;
  /** --preview: one file's edits as a unified diff. */
  diff?: Differ;
}

type Lazy = Exclude<keyof WriterModules, 'text'>;

/** The writer modules `o` needs beyond the text writer. */
export function modulesFor(o: Options): Lazy[] {
  const out: Lazy[] = [];
  if (o.command === 'report') out.push(o.html !== undefined ? 'html' : o.format === 'json' ? 'json' : 'review');
  else if (o.format !== 'text') out.push(o.format);
  if (o.preview) out.push('diff');
  return out;
}

const LOADERS: { [K in Lazy]: () => Promise<NonNullable<WriterModules[K]>> } = {
  json: () => import('../report/json'),
  sarif: () => import('../report/sarif'),
  github: () => import('../report/github'),
  gitlab: () => import('../report/gitlab'),
  review: () => import('../report/review'),
  html: async () => {
    const m = await import('../report/html/writer');
    await m.ready();
    return m;
  },
  diff: () => import('diff'),
};

export async function loadWriters(o: Options): Promise<WriterModules> {
  const m: WriterModules = { text };
  await Promise.all(
    modulesFor(o).map(async (k) => {
      (m as unknown as Record<string, unknown>)[k] = await LOADERS[k]();
    }),
  );
  return m;
}

/** Only the reviewer writer, for a worker thread that renders sections (with `html`, a review page's data). */
export async function loadReviewer(color: boolean, html = false): Promise<Reviewer> {
  if (html) return (await import('../report/html/writer')).htmlSection;
  const review = await LOADERS.review();
  return reviewerFrom(review, color);
}

export const reviewerFrom = (review: NonNullable<WriterModules['review']>, color: boolean): Reviewer => {
  const p = paint(color);
  return (r) => review.reviewSection(r, p);
};

// Results as the writers take them: a checked file is a FileResult without its models.
const asResults = (results: Checked[]): FileResult[] => results;

const quietly = (results: FileResult[], errorsOnly: boolean): FileResult[] =>
  errorsOnly ? results.map((r) => ({ ...r, findings: r.findings.filter((f) => f.severity === 'error' && !f.waived) })) : results;

/** `cwd`: the folder the paths were given from; the CI formats (SARIF, GitHub, GitLab) place findings relative to the repository root. */
export function outputFrom(o: Options, color: boolean, m: WriterModules, cwd = process.cwd()): Output {
  const p = paint(color);
  const root = () => repositoryRoot(cwd);
  const located = (results: FileResult[]): FileResult[] => {
    const top = root();
    return results.map((r) => ({ ...r, path: repoRelative(r.path, cwd, top) }));
  };
  const need = <K extends keyof WriterModules>(k: K): NonNullable<WriterModules[K]> => {
    const mod = m[k];
    if (!mod) throw new Error(`the ${k} writer was not loaded`);
    return mod as NonNullable<WriterModules[K]>;
  };
  const out: Output = { render: () => '' };
  if (o.preview) {
    const { FILE_HEADERS_ONLY, createTwoFilesPatch } = need('diff');
    out.diff = (path, before, after) => createTwoFilesPatch(path, path, before, after, undefined, undefined, { context: 3, headerOptions: FILE_HEADERS_ONLY });
  }
  if (o.command === 'report') {
    if (o.html !== undefined) {
      const dir = o.html;
      const html = need('html');
      out.section = html.htmlSection;
      // The pages are written here; what the command prints is where they are.
      out.render = (results) => {
        const site = html.renderSite(results.map((r) => r.section ?? ''));
        try {
          html.writeSite(resolve(cwd, dir), site);
        } catch (err) {
          throw new OutputError(`cannot write the review pages to ${dir}: ${(err as Error).message}`);
        }
        return `${site.pages.length} block page${site.pages.length === 1 ? '' : 's'} written to ${dir}; open ${join(dir, 'index.html')}\n`;
      };
    } else if (o.format === 'json') {
      const { jsonReport } = need('json');
      out.render = (results) => jsonReport(asResults(results));
    } else {
      const review = need('review');
      out.section = reviewerFrom(review, color);
      // The sections were rendered file by file; the closing lines come last.
      out.render = (results) => results.map((r) => r.section ?? '').join('') + review.reviewClosing(p);
    }
    return out;
  }
  switch (o.format) {
    case 'json': {
      const { jsonReport } = need('json');
      out.render = (results) => jsonReport(asResults(results), { errorsOnly: o.errorsOnly });
      break;
    }
    case 'sarif': {
      const { sarifReport } = need('sarif');
      // The rule pages ship with the package; link them where it is installed.
      out.render = (results) =>
        sarifReport(located(asResults(results)), {
          version: VERSION,
          srcRoot: root(),
          rules: RULES,
          docs: ruleDocs(),
          docsBase: pathToFileURL(docsDir()).href,
          informationUri: pathToFileURL(resolve(docsDir(), '..', 'README.md')).href,
        });
      break;
    }
    case 'github': {
      const { githubReport } = need('github');
      out.render = (results) => githubReport(located(quietly(asResults(results), o.errorsOnly)));
      break;
    }
    case 'gitlab': {
      const { gitlabReport } = need('gitlab');
      out.render = (results) => gitlabReport(located(quietly(asResults(results), o.errorsOnly)));
      break;
    }
    default:
      out.render = (results) => text.textReport(asResults(results), p, { errorsOnly: o.errorsOnly, warningsAllowed: o.warningsAllowed });
  }
  return out;
}
