// The CI report formats: SARIF 2.1.0 (checked by the SARIF Multitool's
// validator, with the GitHub code-scanning rule set), GitHub workflow
// commands and the GitLab code-quality report, all built from real results
// of invented specs and of the demo design repository.
import { mkdtempSync, readFileSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { RULES } from '../../rules';
import { type FileResult, checkText } from '../../src/check';
import type { Finding } from '../../src/verdicts/findings';
import { escapeData, escapeProperty, githubReport } from '../../src/report/github';
import { gitlabReport } from '../../src/report/gitlab';
import { INPUT_DIAGNOSTICS, findingFingerprints, ruleName, sarifReport } from '../../src/report/sarif';
import { INPUT_RULE_IDS } from '../../src/verdicts/waivers';
import { validateSarif } from './multitool';

const TODAY = '2026-01-01';
const REASON = 'accepted at design review DR-7: the 12 pF end of the range only occurs in the slow-settling mode';

// A reference buffer whose claims were copied from an older revision: two
// failing claims, two spacing warnings, table rows (one failing, one that
// conflicts with the front matter, one with a condition that is not
// modelled), and a phase margin accepted by a waiver.
const KESTREL = `---
polecheck: 1
block: kestrel-vref-buffer
title: Kestrel reference buffer, first cut
topology: two-stage-miller
params:
  gm1: 160 µS
  r1: 3 MΩ
  c1: 70 fF
  gm2: 1.2 mS
  r2: 180 kΩ
  c2: 250 fF
  cc: 1.1 pF
  i1: 14 µA
  i2: 140 µA
conditions:
  cl: {min: 3 pF, max: 12 pF}
claims:
  gbw: 40 MHz
  phase_margin: {min: 60 deg}
  slew_rate: {min: 12 V/µs}
waivers:
  - {rule: phase-margin, reason: "${REASON}", expires: 2099-12-31}
---

# Reference buffer

| Parameter | Symbol | Conditions | Min | Typ | Max | Unit |
| --- | --- | --- | --- | --- | --- | --- |
| Unity-gain bandwidth | GBW | CL = 5 pF | | 35 | | MHz |
| Unity-gain bandwidth | GBW | | | 25 | | MHz |
| Phase margin | PM | CL = 5 pF | 65 | | | ° |
| Slew rte | | CL = 5 pF | 8 | | | V/µs |
`;

// Input errors: a transconductance in volts and a misspelt claim.
const BIAS = `---
polecheck: 1
block: kestrel-bias
topology: two-stage-miller
params:
  gm1: 160 µS
  r1: 3 MΩ
  c1: 70 fF
  gm2: 1.2 mV
  r2: 180 kΩ
  c2: 250 fF
  cc: 1.1 pF
claims:
  gbw: 23 MHz
  bandwith: 2 MHz
---
`;

const KESTREL_PATH = 'specs/kestrel/vref buffer.md';
const check = (path: string, text: string) => checkText(path, text, { today: TODAY });
const results = (): FileResult[] => [
  check(KESTREL_PATH, KESTREL),
  check('specs/kestrel/bias.md', BIAS),
  // What the command line reports for a file it cannot decode.
  { path: 'specs/kestrel/legacy.md', skipped: false, findings: [{ rule: 'encoding', severity: 'error', line: 1, column: 1, claim: null, message: 'the file is not valid UTF-8', suggestions: [] }] },
  { path: 'specs/kestrel/README.md', skipped: true, findings: [] },
];
// Checked once; the writers only read them. Tests of stability check afresh.
const RESULTS = results();

const docs = Object.fromEntries(RULES.map((r) => [r.id, readFileSync(join('rules', `${r.id}.md`), 'utf8')]));
const DOCS_BASE = 'https://polecheck.example/docs/rules/';
const INFO = 'https://polecheck.example/';
const sarifOpts = { version: '0.1.0', rules: RULES, docs, docsBase: DOCS_BASE, informationUri: INFO };

// The logs are walked as plain JSON.
// eslint-disable-next-line @typescript-eslint/no-explicit-any
type Json = any;

const find = (rs: FileResult[], rule: string, line: number): Finding => {
  const f = rs.flatMap((r) => r.findings).find((x) => x.rule === rule && x.line === line);
  if (!f) throw new Error(`no ${rule} finding at line ${line}`);
  return f;
};

describe('the invented specs give the findings the formats are tested with', () => {
  it('failing claims, warnings, table rows, an info, a related place, waived findings and input errors', () => {
    const rs = RESULTS;
    const all = rs.flatMap((r) => r.findings);
    expect(find(rs, 'gain-bandwidth', 19).severity).toBe('error');
    expect(find(rs, 'second-pole-spacing', 20).severity).toBe('warning');
    expect(find(rs, 'gain-bandwidth', 30).column).toBe(46);
    expect(find(rs, 'conflicting-claims', 31).related).toEqual([{ line: 19, column: 3, message: expect.stringContaining('40 MHz') }]);
    expect(find(rs, 'table', 33).severity).toBe('note');
    expect(all.filter((f) => f.waived).map((f) => `${f.line} ${f.rule}`)).toEqual(['20 phase-margin', '32 phase-margin']);
    expect(all.filter((f) => f.rule === 'waiver')).toEqual([]);
    expect(find(rs, 'wrong-unit', 9).column).toBe(12);
    expect(find(rs, 'unknown-key', 15).severity).toBe('error');
  });
});

describe('SARIF', () => {
  const log: Json = JSON.parse(sarifReport(RESULTS, sarifOpts));
  const run = log.runs[0];
  const rules: Json[] = run.tool.driver.rules;
  const byRule = (ruleId: string, line: number): Json => {
    const r = run.results.find((x: Json) => x.ruleId === ruleId && x.locations[0].physicalLocation.region.startLine === line);
    if (!r) throw new Error(`no ${ruleId} result at line ${line}`);
    return r;
  };

  it('is one SARIF 2.1.0 run of polecheck', () => {
    expect(log.$schema).toBe('https://json.schemastore.org/sarif-2.1.0.json');
    expect(log.version).toBe('2.1.0');
    expect(log.runs).toHaveLength(1);
    expect(run.tool.driver).toMatchObject({ name: 'polecheck', version: '0.1.0', semanticVersion: '0.1.0', informationUri: INFO });
    expect(run.invocations).toEqual([{ executionSuccessful: true }]);
    expect(run.columnKind).toBe('utf16CodeUnits');
  });

  it('describes every rule of the registry and every input diagnostic, in that order', () => {
    expect(rules.map((r) => r.id)).toEqual([...RULES.map((r) => r.id), ...INPUT_DIAGNOSTICS.map((d) => d.id)]);
    // Every id an input finding carries, and the ones the command line adds.
    for (const id of [...INPUT_RULE_IDS, 'waiver', 'read-error', 'encoding', 'file-too-large']) expect(rules.map((r) => r.id)).toContain(id);
    for (const r of rules) {
      expect(r.name).toMatch(/^[A-Z][A-Za-z0-9]*$/);
      expect(r.name.toLowerCase()).not.toBe(r.id.toLowerCase());
      expect(r.shortDescription.text).toMatch(/\.$/);
      expect(r.fullDescription.text).toMatch(/\.$/);
      expect(r.help.text.length).toBeGreaterThan(0);
      expect(r.help.markdown.length).toBeGreaterThan(0);
      expect(r.helpUri).toMatch(/^https:\/\//);
    }
  });

  it('takes names, descriptions, help and levels from the rules and their pages', () => {
    const pm = rules.find((r) => r.id === 'phase-margin');
    expect(pm.name).toBe('PhaseMargin');
    expect(pm.shortDescription.text).toBe(RULES.find((r) => r.id === 'phase-margin')!.description);
    expect(pm.fullDescription.text).toContain('against 180° plus the phase of the loop gain');
    expect(pm.help.markdown).toBe(docs['phase-margin'].trim());
    expect(pm.help.text).not.toContain('```');
    expect(pm.helpUri).toBe(`${DOCS_BASE}phase-margin.md`);
    expect(pm.defaultConfiguration).toEqual({ level: 'error' });
    expect(rules.find((r) => r.id === 'second-pole-spacing').defaultConfiguration).toEqual({ level: 'warning' });
    expect(rules.find((r) => r.id === 'bandwidth').name).toBe('BandwidthClaim');
    expect(ruleName('gain-bandwidth')).toBe('GainBandwidth');
    const table = rules.find((r) => r.id === 'table');
    expect(table.defaultConfiguration).toEqual({ level: 'note' });
    expect(table.helpUri).toBe(INFO);
  });

  it('has one result per finding, each pointing at its descriptor', () => {
    const findings = RESULTS.flatMap((r) => r.findings);
    expect(run.results).toHaveLength(findings.length);
    for (const r of run.results) expect(rules[r.ruleIndex].id).toBe(r.ruleId);
    expect(run.results.map((r: Json) => r.ruleId)).toEqual(findings.map((f) => f.rule));
  });

  it('maps severities to levels', () => {
    expect(byRule('gain-bandwidth', 19).level).toBe('error');
    expect(byRule('rhp-zero-spacing', 20).level).toBe('warning');
    expect(byRule('table', 33).level).toBe('note');
    expect(byRule('wrong-unit', 9).level).toBe('error');
  });

  it('writes the message as sentences with the suggestions beneath', () => {
    const f = find(RESULTS, 'gain-bandwidth', 19);
    const text: string = byRule('gain-bandwidth', 19).message.text;
    const lines = text.split('\n');
    expect(lines[0]).toBe(`${f.message}.`);
    expect(lines.slice(1)).toEqual(f.suggestions.map((s) => `→ ${s}.`));
    for (const r of run.results) expect(r.message.text).toMatch(/[.?!]$/);
  });

  it('locates results at the claim, relative to %SRCROOT%, with forward slashes and percent-encoding', () => {
    const loc = byRule('gain-bandwidth', 30).locations[0].physicalLocation;
    expect(loc.artifactLocation).toEqual({ uri: 'specs/kestrel/vref%20buffer.md', uriBaseId: '%SRCROOT%', index: 0 });
    expect(loc.region).toEqual({ startLine: 30, startColumn: 46 });
    expect(run.artifacts.map((a: Json) => a.location.uri)).toEqual(['specs/kestrel/vref%20buffer.md', 'specs/kestrel/bias.md', 'specs/kestrel/legacy.md']);
    expect(byRule('wrong-unit', 9).locations[0].physicalLocation.artifactLocation.index).toBe(1);
  });

  it('gives the related place of a conflict as a related location', () => {
    const r = byRule('conflicting-claims', 31);
    expect(r.relatedLocations).toEqual([
      {
        id: 0,
        physicalLocation: { artifactLocation: { uri: 'specs/kestrel/vref%20buffer.md', uriBaseId: '%SRCROOT%', index: 0 }, region: { startLine: 19, startColumn: 3 } },
        message: { text: 'gbw stated as 40 MHz here.' },
      },
    ]);
    expect(byRule('gain-bandwidth', 19).relatedLocations).toBeUndefined();
  });

  it('carries the figures and their derivation as properties', () => {
    const p = byRule('gain-bandwidth', 19).properties;
    expect(p.claim).toBe('gbw');
    expect(p.unit).toBe('Hz');
    expect(p.claimed).toEqual({ typ: 40e6 });
    expect(p.computed).toBeCloseTo(18.2e6, -5);
    expect(p.derivation.method).toBe('frequency-search');
    expect(byRule('wrong-unit', 9).properties).toBeUndefined();
  });

  it('marks waived findings as accepted in-source suppressions, and only those', () => {
    const r = byRule('phase-margin', 20);
    expect(r.level).toBe('error');
    expect(r.suppressions).toEqual([
      {
        kind: 'inSource',
        status: 'accepted',
        justification: REASON,
        location: { physicalLocation: { artifactLocation: { uri: 'specs/kestrel/vref%20buffer.md', uriBaseId: '%SRCROOT%', index: 0 }, region: { startLine: 23, startColumn: 1 } } },
        properties: { expires: '2099-12-31' },
      },
    ]);
    expect(run.results.filter((x: Json) => x.suppressions).length).toBe(2);
  });

  it('makes absolute paths relative to srcRoot when they lie beneath it, file: URIs otherwise', () => {
    const rs: FileResult[] = [
      { path: '/repo/specs/a.md', skipped: false, findings: [find(RESULTS, 'gain-bandwidth', 19)] },
      { path: '/elsewhere/b c.md', skipped: false, findings: [find(RESULTS, 'gain-bandwidth', 19)] },
      { path: '.\\specs\\win.md', skipped: false, findings: [] },
    ];
    const withRoot: Json = JSON.parse(sarifReport(rs, { ...sarifOpts, srcRoot: '/repo' })).runs[0];
    expect(withRoot.originalUriBaseIds).toEqual({ '%SRCROOT%': { uri: 'file:///repo/' } });
    expect(withRoot.artifacts.map((a: Json) => a.location)).toEqual([
      { uri: 'specs/a.md', uriBaseId: '%SRCROOT%' },
      { uri: 'file:///elsewhere/b%20c.md' },
      // On POSIX a backslash is a character of the name, percent-encoded; only on Windows is it a separator (portablePath(…, 'win32')).
      { uri: process.platform === 'win32' ? 'specs/win.md' : '.%5Cspecs%5Cwin.md', uriBaseId: '%SRCROOT%' },
    ]);
    expect(JSON.parse(sarifReport(rs, sarifOpts)).runs[0].originalUriBaseIds).toBeUndefined();
  });

  it('gives a finding of an unregistered id a descriptor of its own, so the index stays valid', () => {
    const odd: FileResult = { path: 'x.md', skipped: false, findings: [{ ...find(RESULTS, 'gain-bandwidth', 19), rule: 'future-rule' }] };
    const r: Json = JSON.parse(sarifReport([odd], sarifOpts)).runs[0];
    expect(r.tool.driver.rules[r.results[0].ruleIndex].id).toBe('future-rule');
  });

  it('is a pure function of the results', () => {
    expect(sarifReport(results(), sarifOpts)).toBe(sarifReport(results(), sarifOpts));
  });
});

describe('fingerprints', () => {
  const all = (rs: FileResult[]) => rs.flatMap((r) => findingFingerprints(r));

  it('are sha-256 hex, the same across runs, and in SARIF under polecheckFingerprint/v1', () => {
    const a = all(RESULTS);
    expect(a.every((h) => /^[0-9a-f]{64}$/.test(h))).toBe(true);
    expect(all(results())).toEqual(a);
    const log: Json = JSON.parse(sarifReport(RESULTS, sarifOpts));
    expect(log.runs[0].results.map((r: Json) => r.partialFingerprints['polecheckFingerprint/v1'])).toEqual(a);
  });

  it('differ for different findings, even ones whose messages differ only in figures', () => {
    const a = all(RESULTS);
    expect(new Set(a).size).toBe(a.length);
    // Three gain-bandwidth findings whose messages differ only in their numbers.
    expect(RESULTS[0].findings.filter((f) => f.rule === 'gain-bandwidth')).toHaveLength(3);
    const moved = check('specs/kestrel/other.md', KESTREL);
    expect(findingFingerprints(moved)).not.toEqual(findingFingerprints(RESULTS[0]));
  });

  it('survive lines moving and figures changing', () => {
    const base = findingFingerprints(check(KESTREL_PATH, KESTREL));
    const shifted = check(KESTREL_PATH, KESTREL.replace('topology:', '# reviewed 2025-11\ntopology:'));
    expect(shifted.findings[0].line).toBe(20);
    expect(findingFingerprints(shifted)).toEqual(base);
    const refigured = check(KESTREL_PATH, KESTREL.replace('gm1: 160 µS', 'gm1: 150 µS'));
    const gbw = (r: FileResult) => findingFingerprints(r)[r.findings.findIndex((f) => f.rule === 'gain-bandwidth')];
    expect(refigured.findings.find((f) => f.rule === 'gain-bandwidth')!.message).not.toBe(find(RESULTS, 'gain-bandwidth', 19).message);
    expect(gbw(refigured)).toBe(gbw(check(KESTREL_PATH, KESTREL)));
  });
});

describe('the SARIF Multitool validator', () => {
  const dir = mkdtempSync(join(tmpdir(), 'polecheck-sarif-'));
  afterAll(() => rmSync(dir, { recursive: true, force: true }));

  // Notes we accept, each a choice rather than an omission: messages are
  // plain text rather than message-string templates (SARIF2002); the writer
  // knows nothing of version control (SARIF2003) nor of the file contents
  // (SARIF2010 snippets, SARIF2011 context regions, SARIF2013 embedded files);
  // rule ids are the kebab-case ids users configure, not "PC1234" (SARIF2009);
  // a path given as absolute outside srcRoot stays absolute (SARIF2016).
  const ACCEPTED_NOTES = new Set(['SARIF2002', 'SARIF2003', 'SARIF2009', 'SARIF2010', 'SARIF2011', 'SARIF2013', 'SARIF2016']);

  it('reports no error, no warning and only the accepted notes for the invented specs and the demo repository', () => {
    const demoFiles = readdirSync('specs', { recursive: true })
      .map(String)
      .filter((f) => f.endsWith('.md'))
      .map((f) => join('specs', f).replace(/\\/g, '/'))
      .sort();
    expect(demoFiles.length).toBeGreaterThanOrEqual(10);
    const demo = demoFiles.map((f) => check(f, readFileSync(f, 'utf8')));
    expect(demo.some((r) => r.findings.length > 0)).toBe(true);

    const files = { invented: join(dir, 'invented.sarif'), demo: join(dir, 'demo.sarif'), canary: join(dir, 'canary.sarif') };
    writeFileSync(files.invented, sarifReport(RESULTS, sarifOpts));
    writeFileSync(files.demo, sarifReport(demo, sarifOpts));
    // The canary proves the validator run can fail: the same log without the
    // properties GitHub code scanning requires of a rule, and without $schema.
    const canary: Json = JSON.parse(sarifReport(RESULTS, sarifOpts));
    delete canary.$schema;
    for (const r of canary.runs[0].tool.driver.rules) delete r.shortDescription;
    writeFileSync(files.canary, JSON.stringify(canary, null, 2));

    const { run: vrun, reported } = validateSarif(dir, [files.invented, files.demo, files.canary]);
    expect(vrun.invocations[0].executionSuccessful).toBe(true);
    // The only configuration notice is the one about the rule disabled above.
    expect((vrun.invocations[0].toolConfigurationNotifications ?? []).map((n: Json) => n.descriptor?.id)).toEqual(['WRN999.RuleExplicitlyDisabled']);
    expect(vrun.invocations[0].toolExecutionNotifications ?? []).toEqual([]);

    for (const file of [files.invented, files.demo]) {
      const found = reported(file);
      // Evidence that the file was analyzed at all: the id-format note every rule draws.
      expect(found.some((r) => r.rule === 'SARIF2009')).toBe(true);
      expect(found.filter((r) => r.level === 'error' || r.level === 'warning')).toEqual([]);
      expect(found.filter((r) => !ACCEPTED_NOTES.has(r.rule))).toEqual([]);
    }
    const canaryFound = reported(files.canary).filter((r) => r.level !== 'note');
    expect(canaryFound.some((r) => r.rule === 'GH2012' && r.level === 'error')).toBe(true);
    expect(canaryFound.some((r) => r.rule === 'SARIF2008')).toBe(true);
  });
});

describe('GitHub workflow commands', () => {
  it('escapes messages and property values as the runner expects', () => {
    expect(escapeData('55 % low\r\nnext: a, b')).toBe('55 %25 low%0D%0Anext: a, b');
    expect(escapeProperty('specs/a,b:c%d.md\n')).toBe('specs/a%2Cb%3Ac%25d.md%0A');
    // `%` first: an existing escape is not left to be decoded.
    expect(escapeData('%0A')).toBe('%250A');
  });

  it('writes one annotation a finding', () => {
    const f: Finding = { rule: 'gain-bandwidth', severity: 'error', line: 19, column: 3, claim: 'gbw', message: 'gbw 55 % low: see below', suggestions: ['write `gbw: 18 MHz`', 'cc = 279 fF, or gm1 = 542 µS'] };
    const out = githubReport([{ path: 'specs\\a,b:c.md', skipped: false, findings: [f] }]);
    // A backslash is a separator on Windows only; on POSIX it is part of the name.
    const file = process.platform === 'win32' ? 'specs/a%2Cb%3Ac.md' : 'specs\\a%2Cb%3Ac.md';
    expect(out).toBe(`::error file=${file},line=19,col=3,title=polecheck gain-bandwidth::gbw 55 %25 low: see below%0A→ write \`gbw: 18 MHz\`%0A→ cc = 279 fF, or gm1 = 542 µS\n`);
  });

  it('maps severities, shows waived findings as notices with their reason, and writes nothing without findings', () => {
    const rs = RESULTS;
    const lines = githubReport(rs).trimEnd().split('\n');
    expect(lines).toHaveLength(rs.flatMap((r) => r.findings).length);
    for (const l of lines) expect(l).toMatch(/^::(error|warning|notice) file=[^,:\r\n]+,line=\d+,col=\d+,title=polecheck [a-z-]+::[^\r\n]+$/);
    expect(lines.some((l) => l.startsWith('::error file=specs/kestrel/vref buffer.md,line=19,col=3,title=polecheck gain-bandwidth::gain-bandwidth claimed 40 MHz'))).toBe(true);
    expect(lines.filter((l) => l.includes('line=20,col=3,title=polecheck rhp-zero-spacing')).every((l) => l.startsWith('::warning '))).toBe(true);
    expect(lines.find((l) => l.includes('title=polecheck table'))).toMatch(/^::notice /);
    const waived = lines.filter((l) => l.includes('title=polecheck phase-margin'));
    expect(waived).toHaveLength(2);
    for (const l of waived) {
      expect(l).toMatch(/^::notice /);
      expect(l).toContain(`(waived: ${REASON})`);
    }
    expect(lines.find((l) => l.includes('polecheck encoding'))).toBe('::error file=specs/kestrel/legacy.md,line=1,col=1,title=polecheck encoding::the file is not valid UTF-8');
    expect(githubReport([])).toBe('');
    expect(githubReport([{ path: 'README.md', skipped: true, findings: [] }])).toBe('');
  });
});

describe('GitLab code quality', () => {
  const rs = RESULTS;
  const issues: Json[] = JSON.parse(gitlabReport(rs));
  const issue = (check: string, line: number) => issues.find((i) => i.check_name === check && i.location.lines.begin === line);

  it('is an array of issues in the documented shape', () => {
    expect(Array.isArray(issues)).toBe(true);
    for (const i of issues) {
      expect(Object.keys(i).sort()).toEqual(['check_name', 'description', 'fingerprint', 'location', 'severity']);
      expect(typeof i.description).toBe('string');
      expect(['info', 'minor', 'major', 'critical', 'blocker']).toContain(i.severity);
      expect(Object.keys(i.location).sort()).toEqual(['lines', 'path']);
      expect(Number.isInteger(i.location.lines.begin)).toBe(true);
      expect(i.location.lines.begin).toBeGreaterThanOrEqual(1);
    }
    expect(issue('gain-bandwidth', 30)).toMatchObject({ severity: 'major', location: { path: 'specs/kestrel/vref buffer.md', lines: { begin: 30 } } });
    expect(issue('gain-bandwidth', 19).description).toMatch(/^gain-bandwidth claimed 40 MHz, .* \(→ if the design is right, .*; → cc = /);
  });

  it('grades claim errors major, input errors critical, warnings minor, info info', () => {
    expect(issue('gain-bandwidth', 19).severity).toBe('major');
    expect(issue('wrong-unit', 9).severity).toBe('critical');
    expect(issue('unknown-key', 15).severity).toBe('critical');
    expect(issue('encoding', 1).severity).toBe('critical');
    expect(issue('second-pole-spacing', 20).severity).toBe('minor');
    expect(issue('table', 33).severity).toBe('info');
  });

  it('leaves waived findings out and shares the SARIF fingerprints, unique per issue', () => {
    const findings = rs.flatMap((r) => r.findings);
    expect(issues).toHaveLength(findings.filter((f) => !f.waived).length);
    expect(issues.filter((i) => i.check_name === 'phase-margin')).toEqual([]);
    const sarif: Json = JSON.parse(sarifReport(rs, sarifOpts));
    const unsuppressed = sarif.runs[0].results.filter((r: Json) => !r.suppressions).map((r: Json) => r.partialFingerprints['polecheckFingerprint/v1']);
    expect(issues.map((i) => i.fingerprint)).toEqual(unsuppressed);
    expect(new Set(issues.map((i) => i.fingerprint)).size).toBe(issues.length);
    expect(gitlabReport([])).toBe('[]\n');
  });
});
