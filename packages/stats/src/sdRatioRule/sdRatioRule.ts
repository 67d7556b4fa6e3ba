import { checkNumberGroups } from '../leveneTest/leveneTest.js';

/**
 * Rule of thumb for homogeneity of variance: the largest group SD divided by the smallest,
 * flagged when the ratio is 2 or more ("largest SD less than twice the smallest" is common
 * practice, not a test; no single published source). SDs use the n - 1 denominator, computed
 * two-pass.
 *
 * @param groups one array of finite numbers per group; at least 2 groups of at least 2 values.
 * @returns `{ ratio, largest, smallest, flagged, threshold: 2, largestGroup, smallestGroup, sds }`
 *   where largest/smallest are the SDs and largestGroup/smallestGroup their indices.
 * @throws {TypeError} when groups is not an array of number arrays.
 * @throws {RangeError} with fewer than 2 groups, a group with fewer than 2 values, a
 *   non-finite value, or a group with zero SD (the ratio is undefined: report that group).
 * @example
 *   sdRatioRule([[1, 2, 3], [1, 3, 5], [2, 2.5, 3]]); // { ratio: 4, flagged: true, ... }
 */

export type SdRatioResult = {
  ratio: number;
  largest: number;
  smallest: number;
  flagged: boolean;
  threshold: 2;
  largestGroup: number;
  smallestGroup: number;
  sds: number[];
};

const FN = 'sdRatioRule';

/** See the module doc block. */
export function sdRatioRule(groups: ArrayLike<number>[]): SdRatioResult {
  checkNumberGroups(FN, groups);
  const sds = groups.map((g, i) => {
    let s = 0;
    for (let j = 0; j < g.length; j++) s += g[j] as number;
    let m = s / g.length;
    let c = 0;
    for (let j = 0; j < g.length; j++) c += (g[j] as number) - m;
    m += c / g.length;
    let ss = 0;
    for (let j = 0; j < g.length; j++) ss += ((g[j] as number) - m) ** 2;
    const sd = Math.sqrt(ss / (g.length - 1));
    if (!(sd > 0)) throw new RangeError(`${FN}: groups[${i}] has zero standard deviation (all values equal); the SD ratio is undefined`);
    return sd;
  });
  let largestGroup = 0;
  let smallestGroup = 0;
  sds.forEach((sd, i) => {
    if (sd > (sds[largestGroup] as number)) largestGroup = i;
    if (sd < (sds[smallestGroup] as number)) smallestGroup = i;
  });
  const largest = sds[largestGroup] as number;
  const smallest = sds[smallestGroup] as number;
  const ratio = largest / smallest;
  return { ratio, largest, smallest, flagged: ratio >= 2, threshold: 2, largestGroup, smallestGroup, sds };
}
