// A linear small-signal network and its nodal matrices.
//
// Nodal analysis: for the unknown node voltages V, (G + sC)·V = −(gIn + s·cIn)·vin,
// where the input node is driven by an ideal voltage source and ground is '0'.

export const GROUND = '0';

export type Element =
  | { kind: 'conductance'; name: string; a: string; b: string; siemens: number }
  | { kind: 'capacitance'; name: string; a: string; b: string; farads: number }
  /**
   * Voltage-controlled current source, SPICE G convention: a current
   * gm·(v(ctrlP) − v(ctrlN)) leaves node `a`, flows through the source and
   * enters node `b`.
   */
  | { kind: 'vccs'; name: string; a: string; b: string; ctrlP: string; ctrlN: string; gm: number };

export interface Network {
  elements: Element[];
  /** Node driven by the ideal input source (its voltage is the input). */
  input: string;
  /** Node whose voltage is the output. */
  output: string;
}

export interface Stamped {
  /** Unknown nodes, in matrix order (ground and input excluded). */
  nodes: string[];
  n: number;
  G: Float64Array;
  C: Float64Array;
  /** Column of G and C belonging to the input node, restricted to the unknown rows. */
  gIn: Float64Array;
  cIn: Float64Array;
  /** Index of the output node among the unknowns. */
  out: number;
}

export class NetworkError extends Error {
  constructor(
    message: string,
    readonly element?: string,
  ) {
    super(message);
  }
}

export function stamp(net: Network): Stamped {
  // Unknown nodes in order of first appearance (ground and input excluded).
  const index = new Map<string, number>();
  const nodes: string[] = [];
  const note = (node: string): void => {
    if (node !== GROUND && node !== net.input && !index.has(node)) {
      index.set(node, nodes.length);
      nodes.push(node);
    }
  };
  for (const e of net.elements) {
    note(e.a);
    note(e.b);
    if (e.kind === 'vccs') {
      note(e.ctrlP);
      note(e.ctrlN);
    }
  }
  const n = nodes.length;
  const IN = -2;
  const idx = (node: string): number => (node === GROUND ? -1 : node === net.input ? IN : (index.get(node) as number));
  const out = index.get(net.output);
  if (out === undefined) throw new NetworkError(`output node '${net.output}' is not an unknown node of the network`);

  const G = new Float64Array(n * n);
  const C = new Float64Array(n * n);
  const gIn = new Float64Array(n);
  const cIn = new Float64Array(n);
  // Adds v to entry (row, col) of M, routing the input node's column to mIn.
  const add = (M: Float64Array, mIn: Float64Array, row: number, col: number, v: number): void => {
    if (row < 0) return;
    if (col === IN) mIn[row] += v;
    else if (col >= 0) M[row * n + col] += v;
  };
  for (const e of net.elements) {
    const i = idx(e.a);
    const j = idx(e.b);
    if (e.kind === 'vccs') {
      const p = idx(e.ctrlP);
      const q = idx(e.ctrlN);
      // KCL written as currents leaving each node.
      add(G, gIn, i, p, e.gm);
      add(G, gIn, i, q, -e.gm);
      add(G, gIn, j, p, -e.gm);
      add(G, gIn, j, q, e.gm);
      continue;
    }
    const [M, mIn, y] = e.kind === 'conductance' ? [G, gIn, e.siemens] : [C, cIn, e.farads];
    add(M, mIn, i, i, y);
    add(M, mIn, j, j, y);
    add(M, mIn, i, j, -y);
    add(M, mIn, j, i, -y);
  }
  return { nodes, n, G, C, gIn, cIn, out };
}
