// Compact storage of result series: Float64Array ↔ little-endian bytes (bytea), and plot reduction per bucket.
import os from 'node:os';

const littleEndian = os.endianness() === 'LE';

/**
 * Encodes samples as IEEE-754 float64, little-endian, 8 bytes each (NaN, ±0 and ±Infinity kept bit for bit).
 * On little-endian hosts the Buffer is a view of the same memory (no copy: a long run's series are large).
 */
export function encodeFloat64(values: Float64Array): Buffer {
	if (littleEndian) return Buffer.from(values.buffer, values.byteOffset, values.byteLength);
	const out = Buffer.allocUnsafe(values.length * 8);
	for (let i = 0; i < values.length; i++) out.writeDoubleLE(values[i], i * 8);
	return out;
}

/** Decodes bytes written by encodeFloat64; copies, because a bytea from pg need not be 8-byte aligned. */
export function decodeFloat64(bytes: Buffer | Uint8Array): Float64Array {
	if (bytes.byteLength % 8 !== 0) throw new Error(`a float64 series must be a multiple of 8 bytes long (got ${bytes.byteLength})`);
	const n = bytes.byteLength / 8;
	const out = new Float64Array(n);
	if (littleEndian) {
		new Uint8Array(out.buffer).set(bytes instanceof Uint8Array ? bytes : new Uint8Array(bytes));
		return out;
	}
	const b = Buffer.from(bytes.buffer, bytes.byteOffset, bytes.byteLength);
	for (let i = 0; i < n; i++) out[i] = b.readDoubleLE(i * 8);
	return out;
}

/** Takes component `c` of `components` interleaved per sample (reaction forces are x,y,z per frame). */
export function component(values: Float64Array, components: number, c: number): Float64Array {
	if (components === 1) return values;
	const n = Math.floor(values.length / components);
	const out = new Float64Array(n);
	for (let i = 0; i < n; i++) out[i] = values[i * components + c];
	return out;
}

/**
 * Reduces a curve to at most about `points` samples for plotting: the samples are cut into points/2 buckets and each
 * bucket keeps its smallest and its largest value (in time order), so no peak of the full curve is lost.
 * NaN samples are skipped; a bucket of only NaN keeps one NaN so that gaps stay visible.
 */
export function reduceMinMax(time: Float64Array, values: Float64Array, points: number): { t: number[]; v: number[] } {
	const n = Math.min(time.length, values.length);
	if (points >= n || n === 0) return { t: Array.from(time.subarray(0, n)), v: Array.from(values.subarray(0, n)) };
	const buckets = Math.max(1, Math.floor(points / 2));
	const t: number[] = [];
	const v: number[] = [];
	for (let b = 0; b < buckets; b++) {
		const start = Math.floor((b * n) / buckets);
		const end = Math.floor(((b + 1) * n) / buckets);
		let lo = -1;
		let hi = -1;
		for (let i = start; i < end; i++) {
			const x = values[i];
			if (Number.isNaN(x)) continue;
			if (lo < 0 || x < values[lo]) lo = i;
			if (hi < 0 || x > values[hi]) hi = i;
		}
		if (lo < 0) {
			t.push(time[start]);
			v.push(Number.NaN);
		} else if (lo === hi) {
			t.push(time[lo]);
			v.push(values[lo]);
		} else {
			const [a, c] = lo < hi ? [lo, hi] : [hi, lo];
			t.push(time[a], time[c]);
			v.push(values[a], values[c]);
		}
	}
	return { t, v };
}
