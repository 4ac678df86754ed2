import type { Quantity } from '../quantity';
import type { Derivation } from './design';
import type { Dims } from './expressions';
import type { ClaimSpec, KeySpec, Topology, Values } from '../topologies/types';
import type { LineIndex, Pos } from './position';

export interface QuantityAt {
  quantity: Quantity;
  pos: Pos;
  /**
   * File offsets (in the text as read, BOM excluded) of what `--restate` may
   * replace: the value's text, and in a table cell whose unit is in the Unit
   * column, the number alone (`numberOnly`).
   */
  span?: { start: number; end: number; numberOnly?: boolean };
  /** Why the value has no span to edit, when its source does not spell it (a table cell with an escape or entity). */
  unedited?: string;
}

/** A param or condition: one value, or a range of them. */
export interface ValueEntry {
  key: string;
  keyPos: Pos;
  spec: KeySpec;
  typ: QuantityAt;
  min?: QuantityAt;
  max?: QuantityAt;
  /** The typical value was not written and is the midpoint of the range. */
  typIsMidpoint?: boolean;
  /** Written as `X ±N%`: min and max are computed, only typ was written. */
  tolerance?: boolean;
  /** `rl: open`: the element is absent. */
  open?: boolean;
  /** Written as an expression (`gm1: 2 * i1 / vov1`): `typ` is its value at the typical point, recomputed wherever what it uses changes. */
  expression?: { text: string; uses: Array<{ name: string; pos: Pos; at: Pos }> };
  /** `from: "@m1[gm]"`: the simulator vectors `polecheck sync` takes the value from. */
  from?: { text: string; pos: Pos; keyPos: Pos };
  /** Written under `design:` (a design quantity named like the param or condition it stands for). */
  design?: boolean;
  /** A design quantity's dimension (exponents of A, V, s). */
  dims?: Dims;
}

/** A table row's own operating point: condition values that replace the front matter's. */
export interface RowConditions {
  values: Values;
  /** As shown in messages: "cl = 10 pF, β = 0.5". */
  text: string;
  pos: Pos;
}

export interface ClaimEntry {
  key: string;
  keyPos: Pos;
  spec: ClaimSpec;
  typ?: QuantityAt;
  min?: QuantityAt;
  max?: QuantityAt;
  /** Written as a plain value (a typical claim), not as bounds. */
  plain: boolean;
  /** Where it is stated; front matter when absent. */
  source?: 'front-matter' | 'table';
  /** The table row's Parameter cell. */
  label?: string;
  /** Conditions of a table row that override the front matter's. */
  conditions?: RowConditions;
}

/** An accepted deviation, recorded in the front matter. */
export interface Waiver {
  rule: string;
  claim?: string;
  reason?: string;
  /** ISO date (YYYY-MM-DD) after which the waiver no longer applies. */
  expires?: string;
  pos: Pos;
}

export interface Spec {
  path: string;
  block?: string;
  title?: string;
  topology: Topology;
  topologyPos: Pos;
  params: Map<string, ValueEntry>;
  conditions: Map<string, ValueEntry>;
  claims: ClaimEntry[];
  /** Where the front matter starts (the opening fence). */
  start: Pos;
  /** Position of the `params:` key, for findings about missing params. */
  paramsPos: Pos;
  waivers: Waiver[];
  /** Design quantities (`design:`) other than those named like a param or condition, which stand for it in `params`/`conditions`. */
  design?: Map<string, ValueEntry>;
  /** How values written as expressions are recomputed; absent when the spec has none. */
  derived?: Derivation;
  /** Offsets → lines and columns of the text as read, for the edits a restatement proposes. */
  lines?: LineIndex;
}
