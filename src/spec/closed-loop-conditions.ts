// The closed-loop gain as a document writes it: signed, in V/V or dB
// (`+10`, `-4 V/V`, `−1`, `20 dB`), shared by the front matter's `gain:` and a
// table's Conditions cell (`G = +10`, `AV = 20 dB`).

import { type Written, parseQuantity } from '../quantity';

export type GainRead = { ok: true; value: number; written: Written } | { ok: false; message: string; offset: number };

const EXPECT = 'expected a signed closed-loop gain in V/V or dB, such as `+10`, `-4 V/V` or `20 dB`';

/**
 * A signal gain: G ≥ 1 non-inverting (β = 1/G), G < 0 inverting (β = 1/(1 + |G|)).
 * dB gives the magnitude of a non-inverting gain (an inverting one is
 * written in V/V with its sign); 0 < G < 1 is no gain ideal feedback gives.
 */
export function parseGain(raw: string): GainRead {
  const text = raw.trim().replace(/\u2212/g, '-');
  const lead = raw.length - raw.trimStart().length;
  // The pattern below backtracks on long runs of spaces: a gain is a short text.
  if (text.length > 60) return { ok: false, message: EXPECT, offset: lead };
  const m = /^([+-]?)\s*(.*?)\s*(V\/V|dB)?$/.exec(text);
  if (!m || m[2] === '') return { ok: false, message: EXPECT, offset: lead };
  const [, sign, number, unit] = m;
  const q = parseQuantity(number, 'ratio');
  if (!q.ok || q.quantity.written.style !== 'bare') return { ok: false, message: EXPECT, offset: lead };
  let value = q.quantity.value;
  if (unit === 'dB') {
    if (sign === '-') return { ok: false, message: 'a gain in dB is the magnitude of a non-inverting gain, at least 0 dB; write an inverting gain in V/V with its sign, `-4 V/V`', offset: lead };
    value = 10 ** (value / 20);
  } else if (sign === '-') {
    value = -value;
  }
  if (!Number.isFinite(value) || value === 0) return { ok: false, message: 'a closed-loop gain cannot be zero', offset: lead };
  if (value > 0 && value < 1) return { ok: false, message: `a non-inverting gain is at least 1 (β = 1/G ≤ 1); an attenuating stage is inverting: write \`-${+value.toPrecision(6)}\``, offset: lead };
  const written: Written = { ...q.quantity.written, text: raw.trim(), number: `${sign}${number}`, unit: unit ?? '', style: unit === 'dB' ? 'dB' : unit === 'V/V' ? 'V/V' : 'bare' };
  return { ok: true, value, written };
}
