// ngspice's raw file (the simulator's own open format, as written by
// `ngspice -b -r FILE` or `write FILE`): a text header per plot — Title,
// Date, Plotname, Flags, No. Variables, No. Points, Variables (index, name,
// type) — then `Values:` (text, one number per line, the point index before
// each point's first value) or `Binary:` (little-endian doubles, point after
// point; two per value for a complex plot). Several plots may follow one
// another in one file. Only what an operating-point import needs is kept:
// each plot's name, its vectors with their types, and their values.

export interface RawVector {
  name: string;
  /** ngspice's type word: voltage, current, admittance, capacitance, impedance, time, frequency, notype… */
  type: string;
  /** Real part of each point. */
  values: number[];
}

export interface RawPlot {
  title: string;
  plotname: string;
  flags: string;
  points: number;
  vectors: RawVector[];
}

export class RawFileError extends Error {}

/** Reads every plot of a raw file (ASCII or binary). */
export function readRaw(data: Uint8Array): RawPlot[] {
  const plots: RawPlot[] = [];
  let at = 0;
  const latin1 = (from: number, to: number) => {
    let s = '';
    for (let i = from; i < to; i++) s += String.fromCharCode(data[i]);
    return s;
  };
  const line = (): string | undefined => {
    if (at >= data.length) return undefined;
    let end = at;
    while (end < data.length && data[end] !== 10) end++;
    const s = latin1(at, end).replace(/\r$/, '');
    at = end + 1;
    return s;
  };
  while (at < data.length) {
    const header: Record<string, string> = {};
    let l: string | undefined;
    // Blank lines between plots.
    while ((l = line()) !== undefined && l.trim() === '');
    if (l === undefined) break;
    let vectors: Array<{ name: string; type: string }> = [];
    for (;;) {
      if (l === undefined) throw new RawFileError('the file ends inside a plot header (no `Values:` or `Binary:` line)');
      const colon = l.indexOf(':');
      if (colon < 0) throw new RawFileError(`not an ngspice raw file: the header line \`${l.slice(0, 60)}\` has no \`:\``);
      const key = l.slice(0, colon).trim().toLowerCase();
      if (key === 'variables') {
        const n = Number(header['no. variables']);
        if (!Number.isInteger(n) || n < 1) throw new RawFileError('the plot header has no valid `No. Variables:` before `Variables:`');
        vectors = [];
        // Either on the same line after the colon (some writers) or one a line.
        for (let i = 0; i < n; i++) {
          const v = line();
          if (v === undefined) throw new RawFileError('the file ends inside the list of variables');
          const parts = v.trim().split(/\s+/);
          if (parts.length < 3 || Number(parts[0]) !== i) throw new RawFileError(`variable ${i} of the plot is not \`${i} NAME TYPE\`: \`${v.trim().slice(0, 60)}\``);
          vectors.push({ name: parts[1], type: parts[2] });
        }
      } else if (key === 'values' || key === 'binary') {
        header[key] = '';
        break;
      } else {
        header[key] = l.slice(colon + 1).trim();
      }
      l = line();
    }
    const flags = (header.flags ?? 'real').toLowerCase();
    const complex = flags.includes('complex');
    const points = Number(header['no. points']);
    if (!Number.isInteger(points) || points < 0) throw new RawFileError('the plot header has no valid `No. Points:`');
    if (!vectors.length) throw new RawFileError('the plot lists no variables');
    const values = vectors.map(() => new Array<number>(points));
    if ('binary' in header) {
      const width = complex ? 16 : 8;
      const need = points * vectors.length * width;
      if (at + need > data.length) throw new RawFileError(`the binary values are cut short: ${points} point(s) of ${vectors.length} vectors need ${need} bytes, ${data.length - at} are left`);
      const view = new DataView(data.buffer, data.byteOffset + at, need);
      let k = 0;
      for (let p = 0; p < points; p++) {
        for (let v = 0; v < vectors.length; v++) {
          values[v][p] = view.getFloat64(k, true);
          k += width;
        }
      }
      at += need;
    } else {
      for (let p = 0; p < points; p++) {
        for (let v = 0; v < vectors.length; v++) {
          let t: string | undefined;
          while ((t = line()) !== undefined && t.trim() === '');
          if (t === undefined) throw new RawFileError(`the values end at point ${p}, vector ${v}; the header promises ${points} point(s)`);
          const fields = t.trim().split(/\s+/);
          // The first value of a point carries the point's index before it.
          const text = v === 0 && fields.length > 1 ? fields[1] : fields[0];
          const x = Number(complex ? text.split(',')[0] : text);
          if (!Number.isFinite(x)) throw new RawFileError(`\`${t.trim().slice(0, 40)}\` is not a number (point ${p}, vector \`${vectors[v].name}\`)`);
          values[v][p] = x;
        }
      }
    }
    plots.push({ title: header.title ?? '', plotname: header.plotname ?? '', flags, points, vectors: vectors.map((v, i) => ({ ...v, values: values[i] })) });
  }
  if (!plots.length) throw new RawFileError('the file holds no plot');
  return plots;
}
