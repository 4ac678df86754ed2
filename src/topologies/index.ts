import type { Topology } from './types';
import { twoStageMiller } from './two-stage-miller';

/** Every topology the format knows, by id. */
export const TOPOLOGIES: readonly Topology[] = [twoStageMiller];
