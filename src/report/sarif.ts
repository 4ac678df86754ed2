// The SARIF 2.1.0 report (OASIS "Static Analysis Results Interchange Format"
// 2.1.0): one run, one reportingDescriptor per rule and per input diagnostic,
// one result per finding. A pure function of the results: rule pages are
// passed in as text (`docs`), never read here. The output passes the SARIF
// Multitool's `validate` without errors or warnings (test/report).

import { createHash } from 'node:crypto';
import { fileURLToPath, pathToFileURL } from 'node:url';
import type { FileResult } from '../check';
import type { Finding, Severity } from '../verdicts/findings';
import type { Rule } from '../verdicts/rule';
import { INPUT_DIAGNOSTICS } from '../diagnostics';

export { INPUT_DIAGNOSTICS } from '../diagnostics';

export interface SarifOptions {
  /** The tool's version (semantic version). */
  version: string;
  rules: readonly Rule[];
  /** Base URI of the rule pages; a rule's helpUri is `${docsBase}<id>.md`. */
  docsBase?: string;
  /** The tool's home page (driver.informationUri); also the helpUri of the input diagnostics, which have no page of their own. */
  informationUri?: string;
  /** The markdown of each rule page (rules/<id>.md), by rule id. */
  docs?: Record<string, string>;
  /** Absolute directory (or file: URI) that relative paths are relative to; recorded as %SRCROOT% in originalUriBaseIds. */
  srcRoot?: string;
}

const SRCROOT = '%SRCROOT%';
const FINGERPRINT_KEY = 'polecheckFingerprint/v1';

const LEVEL: Record<Severity, 'error' | 'warning' | 'note'> = { error: 'error', warning: 'warning', note: 'note' };

const pascal = (id: string): string =>
  id
    .split(/[^A-Za-z0-9]+/)
    .filter(Boolean)
    .map((w) => w[0].toUpperCase() + w.slice(1))
    .join('');

/**
 * The friendly name of a rule: the PascalCase of its id. SARIF wants it to
 * differ from the id (SARIF1001 compares them ignoring case), so a one-word id
 * gets a noun: `bandwidth` → `BandwidthClaim`.
 */
export const ruleName = (id: string): string => {
  const name = pascal(id);
  return name.toLowerCase() === id.toLowerCase() ? `${name}Claim` : name;
};

/** A sentence as SARIF wants it: trimmed and ending with a period (SARIF2001). */
const sentence = (s: string): string => {
  const t = s.trim();
  return /[.?!]$/.test(t) ? t : `${t}.`;
};

/**
 * The path as given, without a leading `./`; on Windows with forward slashes.
 * Elsewhere a backslash is a character of a file name (`back\\slash.md`), kept
 * (and percent-encoded in the URI).
 */
export function portablePath(path: string, platform: string = process.platform): string {
  return (platform === 'win32' ? path.replace(/\\/g, '/') : path).replace(/^(\.\/)+/, '');
}

const isAbsolutePath = (p: string): boolean => p.startsWith('/') || /^[A-Za-z]:\//.test(p) || p.startsWith('//');

/**
 * An artifactLocation: relative paths (and absolute ones under `root`, a
 * directory with forward slashes and a trailing slash) are URI references
 * against %SRCROOT%, other absolute paths file: URIs.
 */
function artifactLocation(path: string, root: string | null): { uri: string; uriBaseId?: string } {
  let p = portablePath(path);
  if (root && p.startsWith(root)) p = p.slice(root.length);
  else if (isAbsolutePath(p)) return { uri: pathToFileURL(p).href };
  return { uri: p.split('/').map(encodeURIComponent).join('/'), uriBaseId: SRCROOT };
}

/** %SRCROOT% as a directory path and as the absolute file: URI SARIF wants (with its trailing slash). */
function sourceRoot(srcRoot: string | undefined): { dir: string; href: string } | null {
  if (!srcRoot) return null;
  const dir = portablePath(/^file:/i.test(srcRoot) ? fileURLToPath(srcRoot) : srcRoot).replace(/\/?$/, '/');
  const href = pathToFileURL(dir).href;
  return { dir, href: href.endsWith('/') ? href : `${href}/` };
}

// ---- fingerprints -------------------------------------------------------

/** The message with its figures taken out, so that a changed number keeps the finding's identity. */
const normalizeMessage = (m: string): string =>
  m
    .replace(/\d+(?:[.,]\d+)*(?:[eE][-+]?\d+)?/g, '#')
    .replace(/\s+/g, ' ')
    .trim()
    .toLowerCase();

/**
 * A stable identity for each finding of a file (sha-256 hex of rule, path,
 * claim and the message without its numbers), the same in SARIF and in the
 * GitLab report. Line numbers are left out so that edits above a finding do
 * not change it; findings that would share one (the same claim failing in two
 * table rows) are told apart by their order of occurrence.
 */
export function findingFingerprints(result: FileResult): string[] {
  const seen = new Map<string, number>();
  const path = portablePath(result.path);
  return result.findings.map((f) => {
    const base = [f.rule, path, f.claim ?? '', normalizeMessage(f.message)].join('\u0000');
    const n = seen.get(base) ?? 0;
    seen.set(base, n + 1);
    return createHash('sha256')
      .update(n ? `${base}\u0000${n}` : base)
      .digest('hex');
  });
}

// ---- rule descriptors ---------------------------------------------------

/** The first paragraph of a `## heading` section of a rule page, on one line. */
function sectionParagraph(markdown: string, heading: string): string | null {
  const lines = markdown.replace(/\r\n?/g, '\n').split('\n');
  const start = lines.findIndex((l) => l.trim().toLowerCase() === `## ${heading}`.toLowerCase());
  if (start < 0) return null;
  const para: string[] = [];
  for (const l of lines.slice(start + 1)) {
    if (l.startsWith('#')) break;
    if (!l.trim()) {
      if (para.length) break;
      continue;
    }
    para.push(l.trim());
  }
  return para.length ? para.join(' ') : null;
}

/** A plain-text rendering of a rule page: headings without their marks, code fences without their fence lines. */
const plainText = (markdown: string): string =>
  markdown
    .replace(/\r\n?/g, '\n')
    .split('\n')
    .filter((l) => !/^\s*(```|~~~)/.test(l))
    .map((l) => l.replace(/^#{1,6}\s+/, ''))
    .join('\n')
    .trim();

interface Descriptor {
  id: string;
  name: string;
  description: string;
  severity: Severity;
  kind: 'rule' | 'input';
  /** Tags shown by SARIF viewers: what a rule judges (claims one by one, or the design), or `input`. */
  tag: 'claims' | 'design' | 'input';
}

function descriptors(rules: readonly Rule[], results: FileResult[]): Descriptor[] {
  const out: Descriptor[] = [
    ...rules.map((r) => ({ id: r.id, name: ruleName(r.id), description: r.description, severity: r.severity, kind: 'rule' as const, tag: r.scope ?? 'design' })),
    ...INPUT_DIAGNOSTICS.filter((d) => !rules.some((r) => r.id === d.id)).map((d) => ({ ...d, kind: 'input' as const, tag: 'input' as const })),
  ];
  // A finding of an id nobody registered still gets a descriptor, so every ruleIndex is valid.
  for (const r of results)
    for (const f of r.findings)
      if (!out.some((d) => d.id === f.rule)) out.push({ id: f.rule, name: `${pascal(f.rule)}Finding`, description: `Findings of \`${f.rule}\`.`, severity: f.severity, kind: 'input', tag: 'input' });
  return out;
}

function reportingDescriptor(d: Descriptor, opts: SarifOptions) {
  const page = opts.docs?.[d.id];
  const helpUri = d.kind === 'rule' && opts.docsBase ? `${opts.docsBase.replace(/\/?$/, '/')}${d.id}.md` : opts.informationUri;
  const what = page ? sectionParagraph(page, 'What it checks') : null;
  const seeAlso = helpUri ? ` See ${helpUri}.` : '';
  return {
    id: d.id,
    name: d.name,
    shortDescription: { text: sentence(d.description) },
    fullDescription: { text: sentence(what ? `${sentence(d.description)} ${what}` : d.description) },
    help: page
      ? { text: sentence(plainText(page)), markdown: page.trim() }
      : { text: `${sentence(d.description)}${seeAlso}`, markdown: `${sentence(d.description)}${helpUri ? ` See [the documentation](${helpUri}).` : ''}` },
    defaultConfiguration: { level: LEVEL[d.severity] },
    ...(helpUri ? { helpUri } : {}),
    properties: { tags: [d.tag] },
  };
}

// ---- results ------------------------------------------------------------

const region = (line: number, column: number) => ({ startLine: Math.max(1, line), startColumn: Math.max(1, column) });

function messageText(f: Finding): string {
  return [sentence(f.message), ...f.suggestions.map((s) => `→ ${sentence(s)}`)].join('\n');
}

function resultProperties(f: Finding): Record<string, unknown> | undefined {
  const p: Record<string, unknown> = {};
  if (f.claim !== null) p.claim = f.claim;
  if (f.claimed) p.claimed = f.claimed;
  if (f.computed !== undefined) p.computed = f.computed;
  if (f.unit) p.unit = f.unit;
  if (f.derivation) p.derivation = f.derivation;
  return Object.keys(p).length ? p : undefined;
}

export function sarifReport(results: FileResult[], opts: SarifOptions): string {
  const rules = descriptors(opts.rules, results);
  const ruleIndex = new Map(rules.map((d, i) => [d.id, i]));
  const checked = results.filter((r) => !r.skipped);
  const root = sourceRoot(opts.srcRoot);

  const artifacts = checked.map((r) => ({
    location: artifactLocation(r.path, root?.dir ?? null),
    roles: ['analysisTarget'],
    mimeType: 'text/markdown',
    sourceLanguage: 'markdown',
  }));

  const sarifResults = checked.flatMap((r, artifactIndex) => {
    const fingerprints = findingFingerprints(r);
    const physical = (line: number, column: number) => ({
      artifactLocation: { ...artifactLocation(r.path, root?.dir ?? null), index: artifactIndex },
      region: region(line, column),
    });
    return r.findings.map((f, i) => {
      const properties = resultProperties(f);
      return {
        ruleId: f.rule,
        ruleIndex: ruleIndex.get(f.rule)!,
        level: LEVEL[f.severity],
        message: { text: messageText(f) },
        locations: [{ physicalLocation: physical(f.line, f.column) }],
        ...(f.related?.length
          ? { relatedLocations: f.related.map((rel, id) => ({ id, physicalLocation: physical(rel.line, rel.column), message: { text: sentence(rel.message) } })) }
          : {}),
        partialFingerprints: { [FINGERPRINT_KEY]: fingerprints[i] },
        ...(f.waived
          ? {
              suppressions: [
                {
                  kind: 'inSource',
                  status: 'accepted',
                  justification: f.waived.reason,
                  location: { physicalLocation: physical(f.waived.line, 1) },
                  ...(f.waived.expires ? { properties: { expires: f.waived.expires } } : {}),
                },
              ],
            }
          : {}),
        ...(properties ? { properties } : {}),
      };
    });
  });

  const log = {
    $schema: 'https://json.schemastore.org/sarif-2.1.0.json',
    version: '2.1.0',
    runs: [
      {
        tool: {
          driver: {
            name: 'polecheck',
            version: opts.version,
            semanticVersion: opts.version,
            ...(opts.informationUri ? { informationUri: opts.informationUri } : {}),
            rules: rules.map((d) => reportingDescriptor(d, opts)),
          },
        },
        invocations: [{ executionSuccessful: true }],
        ...(root ? { originalUriBaseIds: { [SRCROOT]: { uri: root.href } } } : {}),
        artifacts,
        results: sarifResults,
        columnKind: 'utf16CodeUnits',
      },
    ],
  };
  return `${JSON.stringify(log, null, 2)}\n`;
}
