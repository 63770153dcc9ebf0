// Number and label formatting shared by the segment-model components.
import type { Provenance } from '../../anthropometry';

/** Four significant digits, never in exponent notation for the magnitudes segment parameters take. */
export function sig(value: number, digits = 4): string {
	if (!Number.isFinite(value)) return '—';
	const s = value.toPrecision(digits);
	if (!s.includes('e')) return s;
	const [mantissa, exp] = value.toExponential(digits - 1).split('e');
	return `${mantissa} × 10^${Number(exp)}`;
}

const SEGMENT_LABEL: Record<string, string> = {
	upperarm: 'upper arm',
	forearm: 'forearm',
	hand: 'hand',
	thigh: 'thigh',
	shank: 'shank',
	foot: 'foot'
};

/** "right.upperarm" → "Right upper arm". */
export function segmentLabel(key: string): string {
	const [side, segment] = key.split('.');
	const text = `${side} ${SEGMENT_LABEL[segment] ?? segment}`;
	return text.charAt(0).toUpperCase() + text.slice(1);
}

export const KIND_WORD: Record<Provenance['kind'], string> = {
	measured: 'measured',
	estimated: 'estimated',
	chosen: 'chosen'
};
