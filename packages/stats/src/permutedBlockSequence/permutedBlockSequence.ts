import { ALLOCATION_ALGORITHM_VERSION } from '../allocationAlgorithmVersion/allocationAlgorithmVersion.js';
import { createRng } from '../createRng/createRng.js';
import { checkNumber } from '../inputChecks/inputChecks.js';

export type PermutedBlockOptions = {
  /** Arm labels, e.g. ['A', 'B']; at least two, unique. */
  arms: string[];
  /** Allocation ratio per arm, positive integers (default 1 each), e.g. [2, 1]. */
  ratio?: number[];
  /** Allowed block sizes; each must be a multiple of sum(ratio). Mixed at random. */
  blockSizes: number[];
  /** Seed for createRng; store it with the list (one seed per stratum). */
  seed: string;
  /**
   * Minimum number of assignments; whole blocks are generated until it is reached.
   * Omitted: exactly one block.
   */
  length?: number;
};

export type BlockAssignment = {
  /** 0-based position in the list. */
  sequence: number;
  arm: string;
  /** 0-based block number. */
  block: number;
  blockSize: number;
  /** 0-based position within the block. */
  positionInBlock: number;
};

export type PermutedBlockList = {
  algorithm: 'permuted-block';
  version: string;
  rngVersion: string;
  seed: string;
  arms: string[];
  ratio: number[];
  blockSizes: number[];
  assignments: BlockAssignment[];
  blocks: { block: number; size: number; start: number }[];
};

const FN = 'permutedBlockSequence';

/**
 * Permuted-block randomization list with randomly mixed block sizes (ICH E9 2.3.1; SPIRIT 2013
 * item 16a), for one stratum: call once per stratum with its own seed.
 *
 * Algorithm (fixed, versioned in ALLOCATION_ALGORITHM_VERSION.permutedBlock):
 *   rng = createRng(seed)
 *   repeat until at least `length` assignments:
 *     size = blockSizes[floor(rng.next() * blockSizes.length)]
 *     block = each arm i repeated ratio_i * size / sum(ratio) times, in arm order
 *     Fisher-Yates shuffle (Knuth, TAOCP vol. 2, Algorithm P): for j = size - 1 .. 1,
 *       k = floor(rng.next() * (j + 1)), swap block[j] and block[k]
 * Every block holds the exact ratio, so at each block boundary the arms are in the ratio, and
 * within a block the imbalance is at most size / 2 for two arms (with K strata the overall
 * imbalance is at most K * B / 2: Hallstrom & Davis 1988). A longer list for the same seed
 * starts with the shorter one. Sites must never see the block sizes.
 *
 * @throws {TypeError} an option has the wrong type.
 * @throws {RangeError} fewer than two arms or duplicates; ratio of the wrong length or not
 *   positive integers; no block sizes, a size not a positive multiple of sum(ratio), duplicates;
 *   length given but not a positive integer (or above 1e6); empty seed.
 * @example
 * permutedBlockSequence({ arms: ['A', 'B'], blockSizes: [4, 6], seed: 'demo-stratum-1', length: 20 });
 */
export function permutedBlockSequence(options: PermutedBlockOptions): PermutedBlockList {
  if (options === null || typeof options !== 'object') throw new TypeError(`${FN}: options must be an object`);
  const arms = checkArms(FN, options.arms);
  const ratio = checkRatio(FN, options.ratio, arms.length);
  const unit = ratio.reduce((a, b) => a + b, 0);
  if (!Array.isArray(options.blockSizes) || options.blockSizes.length === 0) {
    throw new RangeError(`${FN}: blockSizes must be a non-empty array of block sizes`);
  }
  const blockSizes = options.blockSizes.map((s, i) => {
    checkNumber(FN, `blockSizes[${i}]`, s, { min: 1, integer: true });
    if (s % unit !== 0) {
      throw new RangeError(`${FN}: blockSizes[${i}] = ${s} is not a multiple of the ratio total ${unit} (ratio ${ratio.join(':')})`);
    }
    return s;
  });
  if (new Set(blockSizes).size !== blockSizes.length) throw new RangeError(`${FN}: blockSizes has duplicates: ${blockSizes.join(', ')}`);
  const length = options.length === undefined ? 1 : checkNumber(FN, 'length', options.length, { min: 1, max: 1_000_000, integer: true });
  const rng = createRng(options.seed);
  const assignments: BlockAssignment[] = [];
  const blocks: PermutedBlockList['blocks'] = [];
  while (assignments.length < length) {
    const size = blockSizes[Math.floor(rng.next() * blockSizes.length)] as number;
    const per = size / unit;
    const block: string[] = [];
    arms.forEach((arm, i) => {
      for (let r = 0; r < (ratio[i] as number) * per; r++) block.push(arm);
    });
    for (let j = size - 1; j > 0; j--) {
      const k = Math.floor(rng.next() * (j + 1));
      const tmp = block[j] as string;
      block[j] = block[k] as string;
      block[k] = tmp;
    }
    const b = blocks.length;
    blocks.push({ block: b, size, start: assignments.length });
    block.forEach((arm, positionInBlock) => {
      assignments.push({ sequence: assignments.length, arm, block: b, blockSize: size, positionInBlock });
    });
  }
  return {
    algorithm: 'permuted-block',
    version: ALLOCATION_ALGORITHM_VERSION.permutedBlock,
    rngVersion: ALLOCATION_ALGORITHM_VERSION.rng,
    seed: options.seed,
    arms,
    ratio,
    blockSizes,
    assignments,
    blocks,
  };
}

/** Shared with minimizationAssign. */
export function checkArms(fn: string, arms: unknown): string[] {
  if (!Array.isArray(arms)) throw new TypeError(`${fn}: arms must be an array of arm labels`);
  if (arms.length < 2) throw new RangeError(`${fn}: arms needs at least 2 arms, got ${arms.length}`);
  arms.forEach((a, i) => {
    if (typeof a !== 'string' || a.length === 0) throw new TypeError(`${fn}: arms[${i}] must be a non-empty string`);
  });
  if (new Set(arms).size !== arms.length) throw new RangeError(`${fn}: arms has duplicate labels: ${arms.join(', ')}`);
  return arms as string[];
}

export function checkRatio(fn: string, ratio: unknown, armCount: number): number[] {
  if (ratio === undefined) return new Array<number>(armCount).fill(1);
  if (!Array.isArray(ratio)) throw new TypeError(`${fn}: ratio must be an array of positive integers`);
  if (ratio.length !== armCount) throw new RangeError(`${fn}: ratio has ${ratio.length} entries but there are ${armCount} arms`);
  return ratio.map((r, i) => checkNumber(fn, `ratio[${i}]`, r, { min: 1, integer: true }));
}
