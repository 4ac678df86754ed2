// Spec documents for the command-line tests, written into temporary folders.
//
// The designs are invented (the KX-4 strain-gauge front end of an invented
// instrumentation line). To get specs whose claims agree with the model, the
// claims are the model's own figures (`checkText(...).model.exact`), rounded
// as an author would write them. That is circular for the engine, and
// acceptable here: these tests are about the command line (exit status,
// discovery, formats), not about the engine, which has its own reference tests.

import { mkdirSync, writeFileSync } from 'node:fs';
import { dirname, join } from 'node:path';
import { checkText } from '../../src/check';

export interface Design {
  block: string;
  title: string;
  params: Record<string, string>;
  conditions: Record<string, string>;
}

export const ADC_DRIVER: Design = {
  block: 'kx4-adc-driver',
  title: 'ADC driver, KX-4 strain-gauge front end',
  params: { gm1: '240 µS', r1: '1.8 MΩ', c1: '60 fF', gm2: '2.4 mS', r2: '120 kΩ', c2: '150 fF', cc: '1.5 pF', rz: '420 Ω', i1: '24 µA', i2: '200 µA' },
  conditions: { cl: '3 pF', rl: '20 kΩ', beta: '1' },
};

export const BRIDGE_BUFFER: Design = {
  block: 'kx4-bridge-buffer',
  title: 'Bridge excitation buffer, KX-4',
  params: { gm1: '150 µS', r1: '2.7 MΩ', c1: '40 fF', gm2: '1.8 mS', r2: '180 kΩ', c2: '110 fF', cc: '1.1 pF', rz: '560 Ω', i1: '16 µA', i2: '140 µA' },
  conditions: { cl: '2.2 pF', rl: '47 kΩ', beta: '0.5' },
};

/** A nulling resistor written in mΩ instead of Ω: the prefix-slip warning, and nothing else. */
export const SLIPPED_RZ: Design = { ...ADC_DRIVER, block: 'kx4-adc-driver-rev-b', params: { ...ADC_DRIVER.params, rz: '420 mΩ' } };

export function specText(d: Design, claims: Record<string, string>, body = `# ${d.title}\n\nInvented block of the KX-4 front end.\n`): string {
  const section = (name: string, m: Record<string, string>) => (Object.keys(m).length ? [`${name}:`, ...Object.entries(m).map(([k, v]) => `  ${k}: ${v}`)] : []);
  return [
    '---',
    'polecheck: 1',
    `block: ${d.block}`,
    `title: ${d.title}`,
    'topology: two-stage-miller',
    ...section('params', d.params),
    ...section('conditions', d.conditions),
    ...section('claims', claims),
    '---',
    '',
    body,
  ].join('\n');
}

/** Claims read off the model and rounded (see the note at the top of this file). */
export function consistentClaims(d: Design): Record<string, string> {
  const model = checkText(`${d.block}.md`, specText(d, {})).model;
  if (!model) throw new Error(`${d.block}: the fixture design does not evaluate`);
  const v = (k: string): number => {
    const x = model.exact[k]?.value;
    if (x === null || x === undefined) throw new Error(`${d.block}: no ${k}`);
    return x;
  };
  return {
    dc_gain: `${v('dc_gain').toFixed(1)} dB`,
    gbw: `${(v('gbw') / 1e6).toPrecision(3)} MHz`,
    phase_margin: `{min: ${Math.floor(v('phase_margin')) - 10} deg}`,
    slew_rate: `${(v('slew_rate') / 1e6).toPrecision(3)} V/µs`,
  };
}

export const consistentSpec = (d: Design): string => specText(d, consistentClaims(d));

/** The consistent spec with its DC gain claimed 20 dB too high: one dc-gain error. */
export function overclaimedGainSpec(d: Design): string {
  const claims = consistentClaims(d);
  claims.dc_gain = `${(Number.parseFloat(claims.dc_gain) + 20).toFixed(1)} dB`;
  return specText(d, claims);
}

export const NOTES_PAGE = '---\ntitle: KX-4 bring-up notes\n---\n\n# Bring-up notes\n\nNo spec here.\n';

/** Writes files (text or bytes) under root, creating folders. */
export function writeTree(root: string, files: Record<string, string | Buffer>): void {
  for (const [rel, content] of Object.entries(files)) {
    const full = join(root, rel);
    mkdirSync(dirname(full), { recursive: true });
    writeFileSync(full, content);
  }
}
