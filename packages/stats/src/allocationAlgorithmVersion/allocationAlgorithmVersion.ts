/**
 * Versions of the allocation algorithms, to be stored with every list and every assignment so
 * that it can be reproduced later (ICH E6(R3); DOMAIN.md). Change a version whenever a change
 * to the code could change the output for the same seed and inputs; the golden-sequence tests
 * fail when that happens.
 */
export const ALLOCATION_ALGORITHM_VERSION = {
  /** seedrandom 3.x default generator (ARC4-based), seeded with a string. */
  rng: 'seedrandom-arc4/3',
  /** permutedBlockSequence: block size draw, then Fisher-Yates shuffle per block. */
  permutedBlock: 'counterpoise-permuted-block/1',
  /** minimizationAssign: Pocock & Simon (1975) with ratio-adjusted counts. */
  minimization: 'counterpoise-minimization/1',
} as const;

export type AllocationAlgorithm = keyof typeof ALLOCATION_ALGORITHM_VERSION;
