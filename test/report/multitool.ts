// The SARIF Multitool's validator (`@microsoft/sarif-multitool`, Microsoft's
// reference implementation of the SARIF 2.1.0 checks and of GitHub code
// scanning's ingestion rules), run on SARIF files offline.
import { execFileSync } from 'node:child_process';
import { readFileSync, writeFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { join } from 'node:path';

// A SARIF log is walked as plain JSON.
// eslint-disable-next-line @typescript-eslint/no-explicit-any
type Json = any;

// The native validator the package's `sarif-multitool` command runs; called
// directly so that no shell splits the `;`-separated option lists.
const multitool: string = createRequire(import.meta.url)('@microsoft/sarif-multitool');

/** One problem the validator reported about one of the validated files. */
export interface Reported {
  level: string;
  rule: string;
  where: string;
}

export interface Validation {
  /** The validator's own run: invocations, notifications, results. */
  run: Json;
  /** The problems reported about `file` (one of the validated files). */
  reported(file: string): Reported[];
}

/** Validates `files` with the SARIF rules and the GitHub code-scanning rules (`Sarif;Ghas`), all levels; `dir` holds the validator's config and log. */
export function validateSarif(dir: string, files: string[]): Validation {
  // SARIF2006 fetches every URI in the log over HTTP; tests use no network.
  const config = join(dir, 'offline.xml');
  writeFileSync(
    config,
    `<?xml version="1.0" encoding="utf-8"?>
<Properties>
  <Properties Key="SARIF2006.UrisShouldBeReachable.Options">
    <Property Key="RuleEnabled" Value="Disabled" Type="Driver.RuleEnabledState" />
  </Properties>
</Properties>
`,
  );
  const out = join(dir, 'validation.sarif');
  execFileSync(multitool, ['validate', ...files, '--output', out, '--log', 'ForceOverwrite', '--level', 'Error;Warning;Note', '--rule-kind', 'Sarif;Ghas', '--config', config], { stdio: 'pipe', timeout: 60000 });
  const run: Json = JSON.parse(readFileSync(out, 'utf8')).runs[0];
  const reported = (file: string): Reported[] =>
    (run.results as Json[])
      .filter((r) => decodeURIComponent(r.locations[0].physicalLocation.artifactLocation.uri).endsWith(file.replace(/\\/g, '/')))
      .map((r) => {
        const level = r.level ?? run.tool.driver.rules[r.ruleIndex]?.defaultConfiguration?.level ?? 'warning';
        return { level, rule: r.ruleId as string, where: `${r.locations[0].physicalLocation.region?.startLine}` };
      });
  return { run, reported };
}
