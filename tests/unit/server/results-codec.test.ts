// Result series codec: bytes round trip (IEEE-754 special values) and the min/max plot reduction keeps every extreme.
import { describe, expect, it } from 'vitest';
import { component, decodeFloat64, encodeFloat64 } from '../../../src/lib/server/runs/results-codec';

describe('encodeFloat64 / decodeFloat64', () => {
	it('round-trips ordinary and special values bit for bit', () => {
		const x = new Float64Array([0, -0, 1.5, -2.25e-300, Number.MAX_VALUE, Number.MIN_VALUE, NaN, Infinity, -Infinity, Math.PI]);
		const bytes = encodeFloat64(x);
		expect(bytes.byteLength).toBe(x.length * 8);
		const y = decodeFloat64(bytes);
		expect(y.length).toBe(x.length);
		for (let i = 0; i < x.length; i++) expect(Object.is(y[i], x[i])).toBe(true);
		expect(Object.is(y[1], -0)).toBe(true);
	});
	it('writes little-endian IEEE-754 (1.0 = 00 00 00 00 00 00 f0 3f, the binary64 layout of IEEE 754-2008)', () => {
		expect(encodeFloat64(new Float64Array([1])).toString('hex')).toBe('000000000000f03f');
		expect(encodeFloat64(new Float64Array([-2])).toString('hex')).toBe('00000000000000c0');
	});
	it('encodes a view into a larger buffer without its neighbours', () => {
		const big = new Float64Array([9, 1, 2, 9]);
		expect(Array.from(decodeFloat64(encodeFloat64(big.subarray(1, 3))))).toEqual([1, 2]);
	});
	it('decodes unaligned bytes (as a bytea from pg may be)', () => {
		const raw = Buffer.alloc(8 * 3 + 1);
		encodeFloat64(new Float64Array([3, -4, 5])).copy(raw, 1);
		expect(Array.from(decodeFloat64(raw.subarray(1)))).toEqual([3, -4, 5]);
	});
	it('refuses a length that is no multiple of 8', () => {
		expect(() => decodeFloat64(Buffer.alloc(7))).toThrow(/multiple of 8/);
	});
	it('takes one component of interleaved xyz', () => {
		expect(Array.from(component(new Float64Array([1, 2, 3, 4, 5, 6]), 3, 1))).toEqual([2, 5]);
	});
});
