// Pure helpers of the gait review (components/gait): the feet's line styles, figures as text, the GRF in N or % body
// weight, contacts as shaded spans, CoP trails on the floor plan, series normalised to the gait cycle, the per-foot
// vertical GRF and the manual foot choices of a re-run. No Svelte, no server imports.
import type { ForcePlate } from '../../processing/forces/plate';
import { normaliseGait, type GaitCycle } from '../../processing/gait';
import type { ContactView, CopPath, Foot, GaitAnswer, GaitCycleView, GrfSeries, SpatiotemporalTable, StatView } from '../../types/gait';
import type { FloorPlan } from '../equipment/floor-plan';

export type GaitData = Extract<GaitAnswer, { gait: true }>;
export const FEET: readonly Foot[] = ['left', 'right'];

/**
 * How each foot is drawn everywhere in the gait review: a dark blue solid line (left) and a light orange dashed one
 * (right). Their relative luminances differ enough that they stay apart in greyscale, and the dash tells them apart
 * without any colour (tests/unit/components/gait-plot.test.ts checks both). The letter marks contacts and rows.
 */
export const FOOT_STYLE: Record<Foot, { colour: string; dash: string; label: string; letter: string }> = {
	left: { colour: '#203f73', dash: '', label: 'Left', letter: 'L' },
	right: { colour: '#e3923a', dash: '6 3', label: 'Right', letter: 'R' }
};
/** A contact without a foot. */
export const NO_FOOT_STYLE = { colour: '#7a7a7a', dash: '2 3', label: 'No foot', letter: '?' } as const;

export const footStyle = (foot: Foot | null) => (foot ? FOOT_STYLE[foot] : NO_FOOT_STYLE);
/** The contact styles a key lists: each foot's, then the one without a foot. */
export const KEY_STYLES = [...FEET.map(footStyle), NO_FOOT_STYLE];

/** An axis tick as text: "0", else 0, 1 or 2 decimals as the figure is ≥ 100, ≥ 10 or smaller. */
export const tickText = (n: number) =>
	n === 0 ? '0' : Math.abs(n) >= 100 ? n.toFixed(0) : Math.abs(n) >= 10 ? n.toFixed(1) : n.toFixed(2);

/** A figure with `digits` decimals; "—" where it is not defined. */
export function fixed(x: number | null | undefined, digits = 2): string {
	return x === null || x === undefined || !Number.isFinite(x) ? '—' : x.toFixed(digits);
}

/** "1.05 ± 0.03" (mean ± SD), "1.05" with one value (no SD), "—" with none. */
export function statText(s: StatView, digits = 2): string {
	if (s.mean === null || !Number.isFinite(s.mean)) return '—';
	return s.sd === null || !Number.isFinite(s.sd) ? fixed(s.mean, digits) : `${fixed(s.mean, digits)} ± ${fixed(s.sd, digits)}`;
}

/** The rows of the spatiotemporal table, in order: key in FootSpatiotemporalView, words, unit, decimals. */
export const SPATIOTEMPORAL_ROWS = [
	{ key: 'cadence', label: 'Cadence', unit: 'steps/min', digits: 1 },
	{ key: 'cycleTimeS', label: 'Cycle time', unit: 's', digits: 3 },
	{ key: 'stanceTimeS', label: 'Stance time', unit: 's', digits: 3 },
	{ key: 'stancePercent', label: 'Stance', unit: '% of cycle', digits: 1 },
	{ key: 'swingTimeS', label: 'Swing time', unit: 's', digits: 3 },
	{ key: 'swingPercent', label: 'Swing', unit: '% of cycle', digits: 1 },
	{ key: 'doubleSupportS', label: 'Double support', unit: 's', digits: 3 },
	{ key: 'doubleSupportPercent', label: 'Double support', unit: '% of cycle', digits: 1 },
	{ key: 'stepLengthM', label: 'Step length', unit: 'm', digits: 3 },
	{ key: 'strideLengthM', label: 'Stride length', unit: 'm', digits: 3 },
	{ key: 'speedMS', label: 'Speed', unit: 'm/s', digits: 2 }
] as const satisfies readonly { key: keyof SpatiotemporalTable['left']; label: string; unit: string; digits: number }[];

/** How step and stride lengths were measured, in words. */
export function lengthBasisWords(basis: SpatiotemporalTable['lengthBasis']): string {
	if (basis === 'heel')
		return 'Length basis: step and stride lengths are the distances between the ankle joint centres at the foot strikes, along the pelvis’s mean direction of travel.';
	if (basis === 'pelvis')
		return 'Length basis: step and stride lengths are how far the pelvis travelled along its mean direction of travel between the foot strikes.';
	return 'Length basis: none — step and stride lengths and speed are not given, because the run has no pelvis path or the pelvis did not progress.';
}

export type GrfUnit = 'N' | 'bw';

/** One plate's three GRF components in N or % body weight (null when % body weight is asked for and unknown). */
export function grfComponents(g: GrfSeries, unit: GrfUnit): { x: number[]; y: number[]; z: number[] } | null {
	if (unit === 'N') return { x: g.x, y: g.y, z: g.z };
	return g.percentBodyWeight;
}

export const GRF_COMPONENTS = [
	{ key: 'x', label: 'Fx anterior', dash: '' },
	{ key: 'y', label: 'Fy vertical', dash: '7 3' },
	{ key: 'z', label: 'Fz right', dash: '2 2' }
] as const;

/** The plate's contacts as spans of time (s) for shading, with the foot, and flags in words. */
export function contactSpans(contacts: readonly ContactView[], plate: string) {
	return contacts.filter((c) => c.plate === plate).map((c) => ({ contact: c, from: c.startTime, to: c.endTime, flags: contactFlags(c) }));
}

/** A contact's flags in words ("" for none). */
export function contactFlags(c: ContactView): string {
	const words: string[] = [];
	if (c.shared) words.push('two feet share it');
	if (c.offPlate) words.push('CoP runs off the plate');
	if (c.clipped) words.push('cut by the recording’s start or end');
	return words.join('; ');
}

/** What a contact's "how assigned" reads. */
export function assignedWords(c: ContactView): string {
	if (c.assignedBy === 'model') return 'by the model (the foot over the plate)';
	if (c.assignedBy === 'user') return 'by hand (this run’s options)';
	return c.shared ? 'not assigned: both feet were over the plate' : 'not assigned: no foot over the plate';
}

/** The plates as the floor plan takes them (four corners; a plate with another count is left out). */
export function platesForPlan(plates: GaitData['plates']): ForcePlate[] {
	return plates.flatMap((p): ForcePlate[] => {
		const [c0, c1, c2, c3] = p.corners;
		const [a0, a1, a2] = p.axes;
		if (p.corners.length !== 4 || p.axes.length !== 3) return [];
		return [{ ...p, corners: [c0, c1, c2, c3], axes: [a0, a1, a2] }];
	});
}

export interface CopTrail {
	contact: ContactView;
	/** SVG path in the floor plan's viewBox units ("" when the contact has no CoP point). */
	d: string;
	/** Number of points drawn. */
	points: number;
	/** The first point drawn, in viewBox units as in `d` (null when none is). */
	start: { x: number; y: number } | null;
}

/**
 * The CoP path of each contact on the floor plan (lab X across, lab Z down: the plan's own mapping from its origin and
 * scale), broken where the CoP is undefined.
 */
export function copTrails(
	plan: Pick<FloorPlan, 'origin' | 'scale'>,
	cop: readonly CopPath[],
	contacts: readonly ContactView[]
): CopTrail[] {
	return contacts.flatMap((c) => {
		const path = cop.find((p) => p.plate === c.plate);
		if (!path) return [];
		let d = '';
		let points = 0;
		let pen = false;
		let start: CopTrail['start'] = null;
		for (let k = c.start; k <= c.end && k < path.x.length; k++) {
			const x = path.x[k];
			const z = path.z[k];
			if (x === null || z === null || !Number.isFinite(x) || !Number.isFinite(z)) {
				pen = false;
				continue;
			}
			const px = (plan.origin.x + x * plan.scale).toFixed(1);
			const py = (plan.origin.y + z * plan.scale).toFixed(1);
			d += `${pen ? 'L' : 'M'}${px} ${py}`;
			start ??= { x: Number(px), y: Number(py) };
			pen = true;
			points++;
		}
		return [{ contact: c, d, points, start }];
	});
}

/** A cycle view as processing/gait's cycles (NaN for the undefined figures). */
function asCycle(c: GaitCycleView): GaitCycle {
	const nan = (x: number | null) => (x === null ? Number.NaN : x);
	return {
		...c,
		off: nan(c.off),
		offSample: nan(c.offSample),
		stanceTimeS: nan(c.stanceTimeS),
		swingTimeS: nan(c.swingTimeS),
		stancePercent: nan(c.stancePercent),
		swingPercent: nan(c.swingPercent)
	};
}

export interface FootBand {
	foot: Foot;
	percent: number[];
	mean: number[];
	sd: number[];
	/** Cycles averaged. */
	n: number;
	/** Mean foot off (% of the cycle): the stance/swing boundary; null when no cycle has one. */
	offPercent: number | null;
}

/**
 * A series on the run's time axis (null or NaN in gaps) cut into each foot's used cycles and normalised to 0–100 %
 * (normaliseGait of processing/gait.ts: linear interpolation, 101 points), with the mean ± SD per foot.
 */
export function cycleBands(t: readonly number[], v: readonly (number | null)[], cycles: readonly GaitCycleView[]): Record<Foot, FootBand> {
	const time = Float64Array.from(t);
	const values = Float64Array.from(v, (x) => (x === null ? Number.NaN : x));
	const used = cycles.filter((c) => c.start >= time[0] && c.end <= time[time.length - 1]);
	const r = normaliseGait(time, values, used.map(asCycle));
	const band = (foot: Foot): FootBand => ({
		foot,
		percent: r[foot].percent,
		mean: r[foot].mean,
		sd: r[foot].sd,
		n: r[foot].n,
		offPercent: Number.isFinite(r[foot].stancePercent.mean) ? r[foot].stancePercent.mean : null
	});
	return { left: band('left'), right: band('right') };
}

/**
 * Each foot's vertical GRF (N, or % body weight) on the run's time axis: the plate's vertical component over the
 * samples of that foot's contacts, 0 elsewhere; and which of the foot's cycles it describes — only those whose foot
 * strike opens a contact of that foot (a stance on the floor between plates was not measured). Cycles left out for
 * this reason get excluded 'excluded' with the words "stance not on a plate".
 */
export function footVerticalGrf(
	data: Pick<GaitData, 't' | 'grf' | 'contacts' | 'cycles'>,
	unit: GrfUnit
): { v: Record<Foot, number[]>; cycles: Record<Foot, GaitCycleView[]> } {
	const n = data.t.length;
	const v: Record<Foot, number[]> = { left: new Array<number>(n).fill(0), right: new Array<number>(n).fill(0) };
	for (const c of data.contacts) {
		if (!c.foot) continue;
		const g = data.grf.find((s) => s.plate === c.plate);
		const comp = g ? grfComponents(g, unit) : null;
		if (!comp) continue;
		for (let k = c.start; k <= c.end && k < n; k++) v[c.foot][k] += comp.y[k];
	}
	const onPlate = (cy: GaitCycleView) =>
		data.contacts.some(
			(c) => c.foot === cy.foot && cy.startSample >= c.start && cy.startSample <= c.end && (cy.offSample ?? -1) <= c.end + 1
		);
	const cycles = { left: [] as GaitCycleView[], right: [] as GaitCycleView[] };
	for (const cy of data.cycles) {
		if (cy.excluded || onPlate(cy)) cycles[cy.foot].push(cy);
		else cycles[cy.foot].push({ ...cy, excluded: 'excluded', excludedText: 'stance not on a plate (its vertical force was not measured)' });
	}
	return { v, cycles };
}

/** The choice of a contact's select in the contacts table: keep the run's own decision, or set a foot or none by hand. */
export type FootChoice = 'auto' | 'left' | 'right' | 'none';
export const FOOT_CHOICES: { value: FootChoice; label: string }[] = [
	{ value: 'auto', label: 'Automatic (the model)' },
	{ value: 'left', label: 'Left' },
	{ value: 'right', label: 'Right' },
	{ value: 'none', label: 'No foot' }
];

/** What a contact's select shows first: the foot set by hand for this run, else automatic. */
export function initialChoice(c: ContactView): FootChoice {
	if (c.assignedBy !== 'user') return 'auto';
	return c.foot ?? 'none';
}

const CONTACT_ID = /^[a-z][a-z0-9_-]{0,31}#\d{1,6}$/i;
/** Form field name of a contact's select. */
export const footField = (id: string) => `foot.${id}`;

/**
 * The run option contactFeet from the re-run form (`foot.<plate>#<k>` = auto | left | right | none): automatic
 * choices are left out, "none" is null. A field naming no contact of the run, or another value, is refused in words.
 */
export function contactFeetFromForm(
	entries: Iterable<[string, unknown]>,
	contactIds: readonly string[]
): { ok: true; contactFeet: Record<string, Foot | null> } | { ok: false; problem: string } {
	const out: Record<string, Foot | null> = {};
	const known = new Set(contactIds);
	for (const [name, raw] of entries) {
		if (!name.startsWith('foot.')) continue;
		const id = name.slice(5);
		if (!CONTACT_ID.test(id) || !known.has(id)) return { ok: false, problem: `${name}: this run has no contact ${id}.` };
		const value = String(raw);
		if (value === 'auto') continue;
		if (value === 'left' || value === 'right') out[id] = value;
		else if (value === 'none') out[id] = null;
		else return { ok: false, problem: `${name}: "${value}" is not a foot choice (automatic, left, right or none).` };
	}
	return { ok: true, contactFeet: out };
}

/**
 * The samples a long series is drawn with: every sample up to `max`, else the smallest and largest of each of max/2
 * equal buckets (in time order), so an impact peak is never dropped from the drawing.
 */
export function drawnIndices(v: readonly (number | null)[], max = 2000): number[] {
	const n = v.length;
	if (n <= max) return Array.from({ length: n }, (_, k) => k);
	const buckets = Math.max(1, Math.floor(max / 2));
	const out: number[] = [];
	for (let b = 0; b < buckets; b++) {
		const from = Math.floor((b * n) / buckets);
		const to = Math.floor(((b + 1) * n) / buckets);
		let lo = -1;
		let hi = -1;
		for (let k = from; k < to; k++) {
			const x = v[k];
			if (x === null || !Number.isFinite(x)) continue;
			if (lo < 0 || x < (v[lo] as number)) lo = k;
			if (hi < 0 || x > (v[hi] as number)) hi = k;
		}
		if (lo < 0)
			out.push(from); // a gap: keep it a gap
		else if (lo === hi) out.push(lo);
		else out.push(Math.min(lo, hi), Math.max(lo, hi));
	}
	return out;
}
