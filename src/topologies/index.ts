import { commonSource } from './common-source';
import { singleStage } from './single-stage';
import { threeStageNestedMiller } from './three-stage-nested-miller';
import type { Topology } from './types';
import { twoStageMiller } from './two-stage-miller';

/** Every topology the format knows, by id. */
export const TOPOLOGIES: readonly Topology[] = [twoStageMiller, singleStage, commonSource, threeStageNestedMiller];
