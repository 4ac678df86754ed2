import type { Quantity } from '../quantity';
import type { ClaimSpec, KeySpec, Topology } from '../topologies/types';
import type { Pos } from './position';

export interface QuantityAt {
  quantity: Quantity;
  pos: Pos;
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
  /** `rl: open`: the element is absent. */
  open?: boolean;
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
}
