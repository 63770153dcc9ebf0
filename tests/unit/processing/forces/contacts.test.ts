// Contacts on a plate from a synthetic vertical force with known contact times: half-sine contacts
// F(t) = P·sin(π (t − t0) / T) cross the threshold F* at t0 + (T/π)·asin(F*/P) and t0 + T − (T/π)·asin(F*/P)
// (closed form), so the first and last loaded samples are ⌈t_on·fs⌉ and ⌊t_off·fs⌋.
import { describe, expect, it } from 'vitest';
import {
	DEFAULT_MIN_CONTACT_S,
	DEFAULT_OFF_PLATE_MARGIN_M,
	findContacts,
	plateToLab,
	labToPlate
} from '../../../../src/lib/processing/forces';
import { plate1 as plate } from './plates';

const fs = 1000;
const n = 3000;

interface HalfSine {
	t0: number;
	T: number;
	P: number;
	/** CoP path: start and end X (lab, m); Z fixed at 0.5. */
	x0: number;
	x1: number;
}

function synth(contacts: HalfSine[]) {
	const grf = new Float64Array(3 * n),
		cop = new Float64Array(3 * n).fill(NaN),
		fm = new Float64Array(3 * n);
	for (let i = 0; i < n; i++) {
		const t = i / fs;
		for (const c of contacts) {
			if (t < c.t0 || t > c.t0 + c.T) continue;
			const s = (t - c.t0) / c.T;
			grf[3 * i + 1] = c.P * Math.sin(Math.PI * s);
			cop.set([c.x0 + s * (c.x1 - c.x0), 0, 0.5], 3 * i);
		}
	}
	return { grf, cop, freeMoment: fm };
}

/** First and last loaded samples from the closed-form crossings of the threshold. */
function expected(c: HalfSine, threshold = 20): [number, number] {
	const d = (c.T / Math.PI) * Math.asin(threshold / c.P);
	return [Math.ceil((c.t0 + d) * fs), Math.floor((c.t0 + c.T - d) * fs)];
}

describe('findContacts', () => {
	const walk: HalfSine[] = [
		{ t0: 0.2003, T: 0.62, P: 800, x0: 0.8, x1: 1.2 }, // a stance across the plate
		{ t0: 1.1, T: 0.015, P: 300, x0: 1, x1: 1 }, // a 15 ms bump: loaded < 20 ms, not a contact
		{ t0: 1.5, T: 0.7, P: 700, x0: 1.1, x1: 1.45 } // runs off the far edge (X = 1.3) by 0.15 m
	];

	it('threshold crossings at the closed-form sample (within one sample, here exactly), short bumps ignored, defaults stated', () => {
		expect(DEFAULT_MIN_CONTACT_S).toBe(0.02);
		expect(DEFAULT_OFF_PLATE_MARGIN_M).toBe(0.01);
		const contacts = findContacts(plate, synth(walk), { sampleHz: fs });
		expect(contacts).toHaveLength(2);
		for (const [k, c] of [walk[0], walk[2]].entries()) {
			const [s, e] = expected(c);
			expect(Math.abs(contacts[k].start - s)).toBeLessThanOrEqual(1);
			expect(Math.abs(contacts[k].end - e)).toBeLessThanOrEqual(1);
			expect([contacts[k].start, contacts[k].end]).toEqual([s, e]);
		}
		expect(contacts[0]).toMatchObject({
			plate: 'plate1',
			offPlate: false,
			offPlateAt: null,
			maxOutsideM: 0,
			clipped: false,
			foot: null,
			shared: false
		});
	});

	it('a CoP running off the plate is flagged at the first sample beyond the margin', () => {
		const c = walk[2];
		const [s, e] = expected(c);
		const got = findContacts(plate, synth(walk), { sampleHz: fs })[1];
		expect(got.offPlate).toBe(true);
		// x(t) = x0 + (x1 − x0)(t − t0)/T passes 1.3 + 0.01 at t = t0 + T·(0.21 / 0.35); the first sample strictly beyond
		const tOff = c.t0 + (c.T * (1.31 - c.x0)) / (c.x1 - c.x0);
		expect(Math.abs((got.offPlateAt as number) - Math.floor(tOff * fs + 1))).toBeLessThanOrEqual(1);
		// the largest excursion is at the last loaded sample
		expect(got.maxOutsideM).toBeCloseTo(c.x0 + ((c.x1 - c.x0) * (e / fs - c.t0)) / c.T - 1.3, 9);
		expect(got.offPlateAt as number).toBeGreaterThan(s);
		// a wider margin (0.2 m) accepts it
		expect(findContacts(plate, synth(walk), { sampleHz: fs, marginM: 0.2 })[1].offPlate).toBe(false);
	});

	it('clipped contacts, a NaN CoP while loaded, a higher threshold, a shorter minimum', () => {
		const clipped = findContacts(plate, synth([{ t0: -0.1, T: 0.5, P: 600, x0: 1, x1: 1 }]), { sampleHz: fs });
		expect(clipped).toHaveLength(1);
		expect(clipped[0]).toMatchObject({ start: 0, clipped: true });
		const loads = synth([walk[0]]);
		loads.cop[3 * 500] = NaN;
		expect(findContacts(plate, loads, { sampleHz: fs })[0]).toMatchObject({ offPlate: true, offPlateAt: 500 });
		const [s100] = expected(walk[0], 100);
		expect(findContacts(plate, synth([walk[0]]), { sampleHz: fs, thresholdN: 100 })[0].start).toBe(s100);
		expect(findContacts(plate, synth(walk), { sampleHz: fs, minDurationS: 0.005 })).toHaveLength(3);
	});

	it('the same contacts from plate signals through plateToLab (GRF along the plate normal)', () => {
		const lab = synth(walk);
		const signals = labToPlate(plate, lab);
		const viaPlate = findContacts(plate, plateToLab(plate, signals), { sampleHz: fs });
		expect(viaPlate.map((c) => [c.start, c.end, c.offPlate])).toEqual(
			findContacts(plate, lab, { sampleHz: fs }).map((c) => [c.start, c.end, c.offPlate])
		);
	});

	it('bad settings are refused with a message', () => {
		const lab = synth([]);
		expect(() => findContacts(plate, lab, { sampleHz: 0 })).toThrow(/sampling rate must be a positive number/);
		expect(() => findContacts(plate, lab, { sampleHz: fs, thresholdN: -5 })).toThrow(/threshold must be 0 N or more/);
		expect(() => findContacts(plate, { grf: lab.grf, cop: lab.cop.subarray(3) }, { sampleHz: fs })).toThrow(/same whole number/);
	});
});
