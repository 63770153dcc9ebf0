// Peak detection against scipy.signal: find_peaks (local maxima, plateaus at their middle sample, the prominence
// and distance rules) and peak_prominences, on noisy and quantised signals. tests/reference/scipy_peaks.py writes
// the fixture; it is regenerated here when python3 with scipy is present.
import { describe, expect, it } from 'vitest';
import fs from 'node:fs';
import { detectPeaks } from '../../../src/lib/processing/cycles';
import { loadReference } from '../../reference/fixture';

interface Fixture {
	source: string;
	signals: {
		name: string;
		sampleHz: number;
		x: number[];
		peaks: number[];
		prominences: number[];
		byProminence: { prominence: number; peaks: number[] }[];
		byDistance: { distance: number; peaks: number[] }[];
	}[];
}

const committed = 'tests/fixtures/processing/scipy-peaks.json';
const { fixture, regenerated } = loadReference<Fixture>('tests/reference/scipy_peaks.py', committed);
const timeOf = (n: number, fs: number) => Array.from({ length: n }, (_, i) => i / fs);

describe(`detectPeaks against scipy.signal.find_peaks (${regenerated ? 'regenerated now' : 'committed fixture'}: ${fixture.source})`, () => {
	it.runIf(regenerated)(
		`the committed fixture is what the script writes now (else: rerun tests/reference/scipy_peaks.py --out ${committed})`,
		() => {
			const old: Fixture = JSON.parse(fs.readFileSync(committed, 'utf8'));
			expect(old.signals.map((s) => [s.name, s.peaks, s.byProminence, s.byDistance])).toEqual(
				fixture.signals.map((s) => [s.name, s.peaks, s.byProminence, s.byDistance])
			);
		}
	);

	for (const s of fixture.signals) {
		const time = timeOf(s.x.length, s.sampleHz);
		it(`${s.name}: every local maximum and its prominence (find_peaks, peak_prominences)`, () => {
			const got = detectPeaks(s.x, time);
			expect(got.map((p) => p.index)).toEqual(s.peaks);
			got.forEach((p, k) => {
				expect(p.time).toBe(time[s.peaks[k]]);
				expect(p.value).toBe(s.x[s.peaks[k]]);
				expect(Math.abs(p.prominence - s.prominences[k])).toBeLessThan(1e-9);
			});
		});
		for (const b of s.byProminence) {
			it(`${s.name}: prominence ≥ ${b.prominence} (find_peaks(x, prominence=${b.prominence}))`, () => {
				expect(detectPeaks(s.x, time, { minProminence: b.prominence }).map((p) => p.index)).toEqual(b.peaks);
			});
		}
		for (const b of s.byDistance) {
			// scipy drops a peak less than `distance` samples from a taller kept one; in seconds, any gap between
			// (distance − 1) / fs and distance / fs selects the same peaks
			it(`${s.name}: ${b.distance} samples apart (find_peaks(x, distance=${b.distance}))`, () => {
				expect(detectPeaks(s.x, time, { minDistanceS: (b.distance - 0.5) / s.sampleHz }).map((p) => p.index)).toEqual(b.peaks);
			});
		}
	}
});
