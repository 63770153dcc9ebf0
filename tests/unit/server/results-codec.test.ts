// Result series codec: bytes round trip (IEEE-754 special values) and the min/max plot reduction keeps every extreme.
import { describe, expect, it } from 'vitest';
import { component, decodeFloat64, encodeFloat64, reduceMinMax } from '../../../src/lib/server/results-codec';

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

describe('reduceMinMax', () => {
	const n = 10_001;
	const time = Float64Array.from({ length: n }, (_, i) => i / 1000);
	const values = Float64Array.from(time, (t) => Math.sin(2 * Math.PI * 3 * t) + (t === 4.321 ? 5 : 0));
	values[7777] = -9;
	it('returns at most the asked number of points', () => {
		const r = reduceMinMax(time, values, 200);
		expect(r.t.length).toBeLessThanOrEqual(200);
		expect(r.v.length).toBe(r.t.length);
	});
	it('keeps the global extremes and their times', () => {
		const r = reduceMinMax(time, values, 100);
		const max = Math.max(...values);
		const min = Math.min(...values);
		expect(Math.max(...r.v)).toBe(max);
		expect(Math.min(...r.v)).toBe(min);
		expect(r.t[r.v.indexOf(min)]).toBe(time[7777]);
	});
	it('keeps times increasing', () => {
		const r = reduceMinMax(time, values, 300);
		for (let i = 1; i < r.t.length; i++) expect(r.t[i]).toBeGreaterThan(r.t[i - 1]);
	});
	it('returns everything when fewer samples than points', () => {
		expect(reduceMinMax(new Float64Array([0, 1]), new Float64Array([5, 6]), 10)).toEqual({ t: [0, 1], v: [5, 6] });
	});
	it('keeps a gap of NaN visible', () => {
		const v = new Float64Array(100).fill(NaN);
		const r = reduceMinMax(Float64Array.from({ length: 100 }, (_, i) => i), v, 10);
		expect(r.v.every(Number.isNaN)).toBe(true);
	});
});
