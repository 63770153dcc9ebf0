// The review plots' palette under simulated colour-vision deficiencies: every pair of series colours stays apart.
// Simulation matrices (linear RGB): protanopia and deuteranopia after Viénot, Brettel & Mollon (1999), tritanopia a
// Brettel-type projection — coefficients from memory. Colour difference: CIE76 ΔE in CIELAB (D65), the standard formulas.
import { describe, expect, it } from 'vitest';
import { SERIES_COLOURS, SERIES_DASHES, seriesStyle } from '../../../src/lib/components/review/palette';

type M3 = number[][];
const PROTAN: M3 = [
	[0.152286, 1.052583, -0.204868],
	[0.114503, 0.786281, 0.099216],
	[-0.003882, -0.048116, 1.051998]
];
const DEUTAN: M3 = [
	[0.367322, 0.860646, -0.227968],
	[0.280085, 0.672501, 0.047413],
	[-0.01182, 0.04294, 0.968881]
];
const TRITAN: M3 = [
	[1.255528, -0.076749, -0.178779],
	[-0.078411, 0.930809, 0.147602],
	[0.004733, 0.691367, 0.3039]
];

const mul = (m: M3, v: number[]) => m.map((r) => r[0] * v[0] + r[1] * v[1] + r[2] * v[2]);
const toLinear = (c: number) => (c <= 0.04045 ? c / 12.92 : ((c + 0.055) / 1.055) ** 2.4);
const clamp = (c: number) => Math.min(1, Math.max(0, c));
function lab(hex: string, sim: M3 | null): number[] {
	let rgb = [1, 3, 5].map((i) => toLinear(parseInt(hex.slice(i, i + 2), 16) / 255));
	if (sim) rgb = mul(sim, rgb).map(clamp);
	const [x, y, z] = mul(
		[
			[0.4124, 0.3576, 0.1805],
			[0.2126, 0.7152, 0.0722],
			[0.0193, 0.1192, 0.9505]
		],
		rgb
	);
	const f = (t: number) => (t > 0.008856 ? Math.cbrt(t) : 7.787 * t + 16 / 116);
	const [fx, fy, fz] = [f(x / 0.95047), f(y), f(z / 1.08883)];
	return [116 * fy - 16, 500 * (fx - fy), 200 * (fy - fz)];
}

describe('review palette', () => {
	it.each([
		['normal vision', null],
		['protanopia', PROTAN],
		['deuteranopia', DEUTAN],
		['tritanopia', TRITAN]
	] as const)('keeps every pair ≥ 12 ΔE apart under %s', (_, sim) => {
		const labs = SERIES_COLOURS.map((c) => lab(c, sim as M3 | null));
		for (let i = 0; i < labs.length; i++)
			for (let j = i + 1; j < labs.length; j++) {
				const d = Math.hypot(...labs[i].map((a, k) => a - labs[j][k]));
				expect(d, `${SERIES_COLOURS[i]} vs ${SERIES_COLOURS[j]}`).toBeGreaterThanOrEqual(12);
			}
	});

	it('gives every series a dash pattern of its own, too', () => {
		expect(new Set(SERIES_DASHES).size).toBe(SERIES_DASHES.length);
		expect(SERIES_DASHES.length).toBe(SERIES_COLOURS.length);
		expect(seriesStyle(7)).toEqual({ colour: SERIES_COLOURS[1], dash: SERIES_DASHES[1] });
	});
});
