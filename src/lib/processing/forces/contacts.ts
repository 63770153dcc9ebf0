// Foot contacts on a plate: each loaded interval (normal force at or above the threshold) is one contact, flagged
// when its CoP runs off the plate. Which foot it is, and whether two feet share it, are set by others.
//
// Pure TypeScript; one pass over the samples. Rules: docs/processing.md ("Force plates").
import { DEFAULT_CONTACT_THRESHOLD_N, ForceError, type LabLoads } from './cop';
import { outsideDistance, plateNormal, plateRect, type ForcePlate } from './plate';

/** Loaded intervals shorter than this (s) are not contacts (common practice: a bump or noise, not a foot). */
export const DEFAULT_MIN_CONTACT_S = 0.02;
/** A CoP up to this far (m) outside the plate's outline still counts as on the plate (our choice: a CoP is uncertain by a few mm near the edges). */
export const DEFAULT_OFF_PLATE_MARGIN_M = 0.01;

export interface Contact {
	/** The plate's name. */
	plate: string;
	/** First loaded sample (0-based). */
	start: number;
	/** Last loaded sample (0-based, inclusive). */
	end: number;
	/** The contact is loaded at the recording's first or last sample: its strike or its off was not recorded. */
	clipped: boolean;
	/** The CoP lies outside the outline beyond the margin at some loaded sample. */
	offPlate: boolean;
	/** First sample where it does, else null. */
	offPlateAt: number | null;
	/** Largest distance (m) of the CoP outside the outline over the contact (0 when always on it). */
	maxOutsideM: number;
	/** Set by the foot assignment (model or user); null until then. */
	foot: 'left' | 'right' | null;
	/** Set when two feet share the contact. */
	shared: boolean;
}

export interface ContactOptions {
	sampleHz: number;
	/** Default DEFAULT_CONTACT_THRESHOLD_N (20 N). */
	thresholdN?: number;
	/** Default DEFAULT_MIN_CONTACT_S (20 ms). */
	minDurationS?: number;
	/** Default DEFAULT_OFF_PLATE_MARGIN_M (1 cm). */
	marginM?: number;
}

/**
 * The plate's contacts from its loads in lab axes (plateToLab): a sample is loaded when the GRF's component along
 * the plate's normal has magnitude ≥ thresholdN (the same rule as plateToLab and loadedMask); each maximal run of
 * loaded samples lasting at least minDurationS (⌈minDurationS · sampleHz⌉ samples) is one contact. `loads.cop`
 * must hold the CoP of every loaded sample; a NaN CoP there counts as off the plate.
 */
export function findContacts(plate: ForcePlate, loads: Pick<LabLoads, 'grf' | 'cop'>, opts: ContactOptions): Contact[] {
	const threshold = opts.thresholdN ?? DEFAULT_CONTACT_THRESHOLD_N;
	const minS = opts.minDurationS ?? DEFAULT_MIN_CONTACT_S;
	const margin = opts.marginM ?? DEFAULT_OFF_PLATE_MARGIN_M;
	if (!Number.isFinite(opts.sampleHz) || opts.sampleHz <= 0) {
		throw new ForceError('invalid-argument', `The sampling rate must be a positive number of hertz; got ${opts.sampleHz}.`);
	}
	if (!Number.isFinite(threshold) || threshold < 0)
		throw new ForceError('invalid-argument', `The contact threshold must be 0 N or more; got ${threshold}.`);
	if (!Number.isFinite(minS) || minS < 0)
		throw new ForceError('invalid-argument', `The shortest contact must be 0 s or more; got ${minS}.`);
	if (!Number.isFinite(margin)) throw new ForceError('invalid-argument', `The off-plate margin must be a number of metres; got ${margin}.`);
	const { grf, cop } = loads;
	if (grf.length % 3 !== 0 || cop.length !== grf.length) {
		throw new ForceError(
			'length-mismatch',
			`The GRF and the CoP must hold the same whole number of x y z samples (${grf.length} and ${cop.length} values).`
		);
	}
	const n = grf.length / 3;
	const minSamples = Math.max(1, Math.ceil(minS * opts.sampleHz - 1e-9));
	const [nx, ny, nz] = plateNormal(plate);
	const rect = plateRect(plate);
	const contacts: Contact[] = [];
	let i = 0;
	while (i < n) {
		const j0 = 3 * i;
		if (!(Math.abs(nx * grf[j0] + ny * grf[j0 + 1] + nz * grf[j0 + 2]) >= threshold)) {
			i++;
			continue;
		}
		const start = i;
		let offPlateAt: number | null = null;
		let maxOutside = 0;
		for (; i < n; i++) {
			const j = 3 * i;
			if (!(Math.abs(nx * grf[j] + ny * grf[j + 1] + nz * grf[j + 2]) >= threshold)) break;
			const out = outsideDistance(rect, cop[j], cop[j + 1], cop[j + 2]);
			const outside = Number.isNaN(out) ? Infinity : out;
			if (outside > maxOutside) maxOutside = outside;
			if (outside > margin && offPlateAt === null) offPlateAt = i;
		}
		const end = i - 1;
		if (end - start + 1 < minSamples) continue;
		contacts.push({
			plate: plate.name,
			start,
			end,
			clipped: start === 0 || end === n - 1,
			offPlate: offPlateAt !== null,
			offPlateAt,
			maxOutsideM: maxOutside,
			foot: null,
			shared: false
		});
	}
	return contacts;
}
