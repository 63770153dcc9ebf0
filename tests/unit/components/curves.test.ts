import { describe, expect, it } from 'vitest';
import { zeroSpanningDomain } from '../../../src/lib/components/plots/curves';

// expected values: the definition (extent stretched to 0, padded by a fraction of its span) worked by hand
describe('zeroSpanningDomain', () => {
	it('stretches an all-positive extent down to zero before padding', () => {
		const [lo, hi] = zeroSpanningDomain([20, 120], 0.06);
		expect(lo).toBeCloseTo(-7.2, 12);
		expect(hi).toBeCloseTo(127.2, 12);
	});
	it('stretches an all-negative extent up to zero before padding', () => {
		const [lo, hi] = zeroSpanningDomain([-50, -10], 0.08);
		expect(lo).toBeCloseTo(-54, 12);
		expect(hi).toBeCloseTo(4, 12);
	});
	it('pads a zero span by the fraction of 1', () => {
		expect(zeroSpanningDomain([0, 0], 0.06)).toEqual([-0.06, 0.06]);
	});
});
