import { describe, expect, it } from 'vitest';
import { sdRatioRule } from '../sdRatioRule.js';
import { expectDigits, loadFixture } from '../../referenceTestSupport/referenceTestSupport.js';

describe('sdRatioRule (largest SD < 2 x smallest: common practice, no published source)', () => {
  it('gear-diameter batches: SDs match the exact recomputation in the e-Handbook fixture (derived), ratio = max/min', () => {
    type Gear = { data: Array<{ diameters: string[] }>; derived_exact_not_published: { batch_sd: string[] } };
    const g = loadFixture<Gear>('reference/nist-handbook/gear-diameter.json');
    const r = sdRatioRule(g.data.map((b) => b.diameters.map(Number)));
    const sds = g.derived_exact_not_published.batch_sd.map(Number);
    r.sds.forEach((sd, i) => expectDigits(`batch ${i + 1} SD`, sd, sds[i] as number, 12));
    expectDigits('ratio', r.ratio, Math.max(...sds) / Math.min(...sds), 12);
    expect(r.largestGroup).toBe(5);
    expect(r.smallestGroup).toBe(7);
    expect(r.flagged).toBe(r.ratio >= 2);
    expect(r.flagged).toBe(true); // 0.009886 / 0.003627 = 2.73
  });
  it('flags at exactly 2 and not below', () => {
    expect(sdRatioRule([[1, 3], [2, 6]]).flagged).toBe(true); // SDs sqrt(2), 2 sqrt(2)
    expect(sdRatioRule([[1, 3], [2, 5.9]]).flagged).toBe(false);
  });
  it('bad input', () => {
    expect(() => sdRatioRule([[1, 2]])).toThrow(/sdRatioRule: groups needs at least 2 groups/);
    expect(() => sdRatioRule([[1, 2], [3]])).toThrow(/groups\[1\] has 1 value/);
    expect(() => sdRatioRule([[1, 2], [3, 3]])).toThrow(/groups\[1\] has zero standard deviation/);
    expect(() => sdRatioRule([[1, 2], [3, Infinity]])).toThrow(/groups\[1\]\[1\] must be finite/);
    expect(() => sdRatioRule(null as never)).toThrow(TypeError);
  });
});
