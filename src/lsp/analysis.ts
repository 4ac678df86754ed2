// One open document checked as `polecheck check` checks its file (src/check.ts,
// with the configuration and waivers that govern it), and its findings as
// LSP diagnostics: the range of the key, value or cell the finding points
// at, the severity, the rule id with a link to its page, the places that
// take part as related information.

import { join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { type Diagnostic, DiagnosticSeverity, DiagnosticTag } from 'vscode-languageserver';
import { RULES } from '../../rules';
import { type CheckOptions, type FileResult, checkText } from '../check';
import { docsDir } from '../cli/docs';
import type { Config, ConfigError } from '../config';
import type { Finding } from '../verdicts/findings';
import { todayIso } from '../verdicts/waivers';
import { splitLines, tokenRange, toPosition } from './positions';

export interface Analysis {
  uri: string;
  version: number;
  text: string;
  lines: string[];
  path?: string;
  /** Undefined when the document is not checked (not Markdown, excluded, or its configuration is broken). */
  result?: FileResult;
  /** The check with the design changes searched for (its findings are the same, with more fixes): made when code actions are asked for. */
  full?: FileResult;
  /** The options of the check. */
  options?: CheckOptions;
  config?: Config;
  configError?: ConfigError;
  diagnostics: Diagnostic[];
}

const SEVERITY: Record<string, DiagnosticSeverity> = { error: DiagnosticSeverity.Error, warning: DiagnosticSeverity.Warning, info: DiagnosticSeverity.Information, note: DiagnosticSeverity.Information };

const RULE_IDS = new Set(RULES.map((r) => r.id));

let pages: string | undefined;
/** The rule's page beside the installed package (rules/<id>.md), as SARIF's helpUri gives it; input diagnostics have none. */
export function rulePage(rule: string): string | undefined {
  if (!RULE_IDS.has(rule)) return undefined;
  pages ??= docsDir();
  return pathToFileURL(join(pages, `${rule}.md`)).href;
}

export const SOURCE = 'polecheck';

export function toDiagnostic(f: Finding, uri: string, text: string, lines: string[], index: number): Diagnostic {
  const href = rulePage(f.rule);
  const d: Diagnostic = {
    range: tokenRange(text, lines, f.line, f.column),
    severity: f.waived ? DiagnosticSeverity.Hint : SEVERITY[f.severity] ?? DiagnosticSeverity.Information,
    code: f.rule,
    source: SOURCE,
    message: f.waived ? `waived (${f.waived.reason}${f.waived.expires ? `, until ${f.waived.expires}` : ''}): ${f.message}` : f.message,
    data: { index },
  };
  if (href) d.codeDescription = { href };
  if (f.waived) d.tags = [DiagnosticTag.Unnecessary];
  if (f.related?.length) d.relatedInformation = f.related.map((r) => ({ location: { uri, range: tokenRange(text, lines, r.line, r.column) }, message: r.message }));
  return d;
}

export interface AnalyzeInput {
  uri: string;
  version: number;
  text: string;
  /** Absolute path of the document. */
  path: string;
  /** Markdown (by language or file name), and not excluded by its configuration. */
  checked: boolean;
  config: { ok: true; config: Config } | { ok: false; error: ConfigError };
  configUri?: string;
  today?: string;
}

export function analyze(input: AnalyzeInput): Analysis {
  const { uri, version, text } = input;
  const lines = splitLines(text);
  const out: Analysis = { uri, version, text, lines, diagnostics: [] };
  if (!input.checked) return out;
  if (!input.config.ok) {
    // As the command stops with the configuration's own line and column, the document says why it is not checked.
    const e = input.config.error;
    out.configError = e;
    out.diagnostics.push({
      range: { start: toPosition(text, 1, 1), end: toPosition(text, 1, 4) },
      severity: DiagnosticSeverity.Error,
      code: 'config',
      source: SOURCE,
      message: `not checked: the configuration is invalid: ${e.message}`,
      ...(input.configUri ? { relatedInformation: [{ location: { uri: input.configUri, range: { start: { line: e.pos.line - 1, character: e.pos.column - 1 }, end: { line: e.pos.line - 1, character: e.pos.column } } }, message: 'the problem' }] } : {}),
    });
    return out;
  }
  const config = input.config.config;
  out.config = config;
  // As you type, the findings only: the design changes (the costly part of a failing claim) are searched for when a code action asks.
  out.options = { rules: config.rules, tolerances: config.tolerances, today: input.today ?? todayIso() };
  out.path = input.path;
  const result = checkText(input.path, text, { ...out.options, designChanges: false });
  out.result = result;
  out.diagnostics = result.findings.map((f, i) => toDiagnostic(f, uri, text, lines, i));
  return out;
}

/** The document's check with design changes, made once per version; its findings are those of the diagnostics, in the same order. */
export function withDesignChanges(a: Analysis): FileResult | undefined {
  if (!a.result?.spec || !a.options || !a.path) return a.result;
  a.full ??= checkText(a.path, a.text, a.options);
  const same = a.full.findings.length === a.result.findings.length && a.full.findings.every((f, i) => f.rule === a.result!.findings[i].rule && f.line === a.result!.findings[i].line && f.column === a.result!.findings[i].column);
  return same ? a.full : a.result;
}
