import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { permutedBlockSequence } from '../permutedBlockSequence.js';

describe('permutedBlockSequence', () => {
  it('is balanced in the ratio at every block boundary, for any arms, ratio and sizes (property)', () => {
    fc.assert(
      fc.property(
        fc.integer({ min: 2, max: 4 }),
        fc.array(fc.integer({ min: 1, max: 3 }), { minLength: 4, maxLength: 4 }),
        fc.uniqueArray(fc.integer({ min: 1, max: 4 }), { minLength: 1, maxLength: 3 }),
        fc.string({ minLength: 1, maxLength: 12 }),
        fc.integer({ min: 1, max: 120 }),
        (k, ratioAll, multiples, seed, length) => {
          const arms = ['A', 'B', 'C', 'D'].slice(0, k);
          const ratio = ratioAll.slice(0, k);
          const unit = ratio.reduce((a, b) => a + b, 0);
          const list = permutedBlockSequence({ arms, ratio, blockSizes: multiples.map((m) => m * unit), seed, length });
          expect(list.assignments.length).toBeGreaterThanOrEqual(length);
          const counts = new Map(arms.map((a) => [a, 0]));
          let next = 0;
          for (const b of list.blocks) {
            expect(b.start).toBe(next);
            for (const a of list.assignments.slice(b.start, b.start + b.size)) counts.set(a.arm, (counts.get(a.arm) as number) + 1);
            next = b.start + b.size;
            // At the boundary, arm i holds ratio_i / unit of everything allocated so far.
            arms.forEach((a, i) => expect((counts.get(a) as number) * unit).toBe((ratio[i] as number) * next));
          }
          expect(next).toBe(list.assignments.length);
        },
      ),
    );
  });
  it('is reproducible from the seed, and a longer list starts with the shorter one', () => {
    const opts = { arms: ['A', 'B'], blockSizes: [4, 6], seed: 'demo-site-2/stratum-F' };
    const a = permutedBlockSequence({ ...opts, length: 30 });
    const b = permutedBlockSequence({ ...opts, length: 30 });
    const longer = permutedBlockSequence({ ...opts, length: 90 });
    expect(b.assignments).toEqual(a.assignments);
    expect(longer.assignments.slice(0, a.assignments.length)).toEqual(a.assignments);
    expect(a.version).toBe('counterpoise-permuted-block/1');
  });
  it('mixes the block sizes and varies the order within blocks', () => {
    const list = permutedBlockSequence({ arms: ['A', 'B'], blockSizes: [2, 4, 6], seed: 'mix', length: 600 });
    expect(new Set(list.blocks.map((b) => b.size)).size).toBe(3);
    const patterns = new Set(list.blocks.filter((b) => b.size === 4).map((b) => list.assignments.slice(b.start, b.start + 4).map((x) => x.arm).join('')));
    expect(patterns.size).toBe(6); // all C(4,2) = 6 arrangements of AABB occur
  });
  it('generates exactly one block when length is omitted', () => {
    const list = permutedBlockSequence({ arms: ['A', 'B', 'C'], blockSizes: [3, 6], seed: 'one-block' });
    expect(list.blocks).toHaveLength(1);
    expect(list.assignments).toHaveLength(list.blocks[0]?.size as number);
  });
  it('pins the list for one seed (reproducibility: if this changes, bump the version)', () => {
    const list = permutedBlockSequence({ arms: ['A', 'B'], blockSizes: [4], seed: 'pinned', length: 8 });
    const again = permutedBlockSequence({ arms: ['A', 'B'], blockSizes: [4], seed: 'pinned', length: 8 });
    expect(list.assignments.map((x) => x.arm).join('')).toBe(again.assignments.map((x) => x.arm).join(''));
    expect(list.assignments.map((x) => x.arm).join('')).toMatchInlineSnapshot(`"ABABBAAB"`);
  });
  it.each([
    ['one arm', { arms: ['A'] }, RangeError, /arms needs at least 2 arms/],
    ['duplicate arms', { arms: ['A', 'A'] }, RangeError, /duplicate labels/],
    ['block size not a multiple of the ratio total', { ratio: [2, 1], blockSizes: [4] }, RangeError, /blockSizes\[0\] = 4 is not a multiple of the ratio total 3/],
    ['ratio of the wrong length', { ratio: [1] }, RangeError, /ratio has 1 entries but there are 2 arms/],
    ['zero ratio', { ratio: [0, 1] }, RangeError, /ratio\[0\] must be at least 1/],
    ['no block sizes', { blockSizes: [] }, RangeError, /blockSizes must be a non-empty array/],
    ['fractional block size', { blockSizes: [2.5] }, RangeError, /blockSizes\[0\] must be an integer/],
    ['duplicate block sizes', { blockSizes: [4, 4] }, RangeError, /blockSizes has duplicates/],
    ['zero length', { length: 0 }, RangeError, /length must be at least 1/],
    ['non-numeric length', { length: '10' }, TypeError, /length must be a number/],
    ['empty seed', { seed: '' }, RangeError, /seed must not be empty/],
  ])('rejects %s', (_l, patch, type, message) => {
    const call = () => permutedBlockSequence({ arms: ['A', 'B'], blockSizes: [4], seed: 's', length: 10, ...(patch as object) } as never);
    expect(call).toThrow(type);
    expect(call).toThrow(message);
  });
});
