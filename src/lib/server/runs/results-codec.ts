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
