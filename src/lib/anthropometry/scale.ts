// Builds a participant's arm and leg segment trees for the engine from a chosen published table.
import { z } from 'zod';
import type { BodyInput, Mat3, ModelInput, Vec3 } from '../dynamics/model';
import {
	tables,
	modelEndpointsOf,
	SEGMENT_TABLES,
	SEGMENT_TABLE_IDS,
	type SegmentName,
	type SegmentTableId,
	type SexParams,
	type TableSex
} from './tables';

export const SIDES = ['right', 'left'] as const;
export type Side = (typeof SIDES)[number];
export const LIMBS = ['right.arm', 'left.arm', 'right.leg', 'left.leg'] as const;
export type Limb = (typeof LIMBS)[number];
export const LENGTH_KEYS = SIDES.flatMap((s) =>
	(['upperarm', 'forearm', 'hand', 'thigh', 'shank', 'foot'] as const).map((g) => `${s}.${g}` as const)
);
export type LengthKey = (typeof LENGTH_KEYS)[number];

/**
 * What scaling needs to know of a participant. `sex` 'not reported' is allowed; a table that depends on sex
 * then needs `notReportedAs`: 'female' or 'male' (a stated choice), or 'mean' (the average of the female and
 * male parameters), and the output records the choice.
 */
export const participantBodySchema = z.object({
	sex: z.enum(['female', 'male', 'not reported'], { error: 'sex must be "female", "male" or "not reported"' }),
	bodyMass: z
		.number({ error: 'body mass must be a number (kg)' })
		.refine(Number.isFinite, 'body mass must be a finite number (kg)')
		.refine((v) => v >= 20 && v <= 300, { error: (i) => `body mass must be between 20 and 300 kg (got ${i.input} kg)` }),
	stature: z
		.number({ error: 'stature must be a number (m)' })
		.refine(Number.isFinite, 'stature must be a finite number (m)')
		.refine((v) => v >= 0.8 && v <= 2.5, { error: (i) => `stature must be between 0.8 and 2.5 m (got ${i.input} m)` }),
	measuredLengths: z
		.partialRecord(z.enum(LENGTH_KEYS, { error: 'unknown segment: use <side>.<segment>, e.g. right.thigh' }), z.number())
		.optional(),
	notReportedAs: z.enum(['female', 'male', 'mean']).optional()
});
export type ParticipantBody = z.infer<typeof participantBodySchema>;

export class ScalingError extends Error {
	constructor(public readonly problems: string[]) {
		super(problems.join('; '));
		this.name = 'ScalingError';
	}
}

export interface Provenance {
	value: number;
	unit: string;
	/** measured: entered for this participant; estimated: computed from a table; chosen: Momentry's stated default. */
	kind: 'measured' | 'estimated' | 'chosen';
	source: string;
}

export interface ScaledSegment {
	key: LengthKey;
	side: Side;
	segment: SegmentName;
	/** The endpoints of the table row the fractions come from. */
	proximal: string;
	distal: string;
	/** Set when the row is applied between other endpoints (the model's), with the table file's reason. */
	takenAs?: { proximal: string; distal: string; note: string };
	length: Provenance;
	mass: Provenance;
	/** Distance of the centre of mass from the proximal joint centre, m. */
	comDistance: Provenance;
	/** Principal moments of inertia about the centre of mass, kg·m². */
	inertia: { flexion: Provenance; abduction: Provenance; longitudinal: Provenance };
}

export interface DofInfo {
	/** Our column scheme `<side>.<joint>.<motion>`, e.g. right.knee.flexion. */
	name: string;
	side: Side;
	joint: 'hip' | 'knee' | 'ankle' | 'shoulder' | 'elbow' | 'forearm' | 'wrist';
	motion: string;
	unit: 'rad';
	/** The sign rule shown next to every plot axis. */
	positive: string;
}

export interface ScaledModel {
	table: { id: SegmentTableId; title: string; citation: string };
	/** The sex whose parameters were used, and why. */
	sexUsed: { value: TableSex | 'mean' | 'any'; reason: string };
	bodyMass: number;
	stature: number;
	limbs: Limb[];
	model: ModelInput;
	/** dofs[i] describes the joint of model.bodies[i]. */
	dofs: DofInfo[];
	segments: ScaledSegment[];
	notes: string[];
}

/** Momentry's plausibility rule for measured lengths: within 50–160 % of the stature-proportion estimate. */
export const PLAUSIBLE_LENGTH = { min: 0.5, max: 1.6 } as const;

type SexChoice = {
	params: (segment: SegmentName) => SexParams;
	value: ScaledModel['sexUsed']['value'];
	reason: string;
	tableSex: TableSex | 'mean' | 'any';
};

function mean(a: SexParams, b: SexParams): SexParams {
	const avg = (x: { value: number; source: string }, y: { value: number; source: string }) => ({
		value: (x.value + y.value) / 2,
		source: `mean of female (${x.source}) and male (${y.source})`
	});
	return {
		massFraction: avg(a.massFraction, b.massFraction),
		comFraction: avg(a.comFraction, b.comFraction),
		gyration: {
			flexion: avg(a.gyration.flexion, b.gyration.flexion),
			abduction: avg(a.gyration.abduction, b.gyration.abduction),
			longitudinal: avg(a.gyration.longitudinal, b.gyration.longitudinal)
		},
		meanLength: a.meanLength && b.meanLength ? avg(a.meanLength, b.meanLength) : undefined
	};
}

function chooseSex(p: ParticipantBody, tableId: SegmentTableId): SexChoice {
	if (tableId === 'dempster-winter-2009') {
		const t = tables.dempster;
		return { params: (s) => t.segments[s].any!, value: 'any', reason: 'the table has one set of fractions for everyone', tableSex: 'any' };
	}
	const t = tables.deLeva;
	if (tableId === 'zatsiorsky-regression-2002') {
		if (p.sex === 'female') {
			throw new ScalingError([
				'the Zatsiorsky regression equations were fitted on men only; choose de Leva (1996), which has female parameters'
			]);
		}
		const sex = tables.zatsiorsky.geometry.sex;
		const reason = p.sex === 'male' ? 'participant reported male' : 'sex not reported; the regression equations exist for men only';
		return { params: (s) => t.segments[s][sex]!, value: sex, reason, tableSex: sex };
	}
	if (p.sex === 'female' || p.sex === 'male') {
		const sex = p.sex;
		return { params: (s) => t.segments[s][sex]!, value: sex, reason: `participant reported ${sex}`, tableSex: sex };
	}
	const rule = p.notReportedAs;
	if (!rule) {
		throw new ScalingError([
			'sex is not reported and de Leva (1996) has separate female and male parameters: choose how to treat it (female, male, or the mean of both)'
		]);
	}
	if (rule === 'mean') {
		return {
			params: (s) => mean(t.segments[s].female!, t.segments[s].male!),
			value: 'mean',
			reason: 'sex not reported; the mean of the female and male parameters, as chosen',
			tableSex: 'mean'
		};
	}
	return { params: (s) => t.segments[s][rule]!, value: rule, reason: `sex not reported; ${rule} parameters, as chosen`, tableSex: rule };
}

/** Length of a segment from stature proportions (Drillis & Contini). */
export function statureLength(segment: SegmentName, stature: number): Provenance {
	const f = tables.drillis.lengths[segment].fraction;
	return { value: f.value * stature, unit: 'm', kind: 'estimated', source: `${f.value} × stature; ${f.source}` };
}

function estimatedLength(segment: SegmentName, stature: number, tableId: SegmentTableId, sex: SexChoice, params: SexParams): Provenance {
	if (tableId === 'dempster-winter-2009') return statureLength(segment, stature);
	// de Leva's own mean lengths, scaled by the participant's stature over the sample's mean stature
	const ref = tables.deLeva.lengths.referenceStature!;
	const refStature = sex.tableSex === 'mean' ? (ref.female.value + ref.male.value) / 2 : ref[sex.tableSex as TableSex].value;
	const L = params.meanLength!;
	return {
		value: (L.value * stature) / refStature,
		unit: 'm',
		kind: 'estimated',
		source: `${L.value} m × stature / ${refStature} m; ${L.source}`
	};
}

function segmentMass(segment: SegmentName, p: ParticipantBody, tableId: SegmentTableId, params: SexParams): Provenance {
	if (tableId === 'zatsiorsky-regression-2002') {
		const r = tables.zatsiorsky.segments[segment];
		const value = r.b0.value + r.b1.value * p.bodyMass + r.b2.value * (p.stature * 100);
		return {
			value,
			unit: 'kg',
			kind: 'estimated',
			source: `${r.b0.value} + ${r.b1.value} × ${p.bodyMass} kg + ${r.b2.value} × ${p.stature * 100} cm; ${tables.zatsiorsky.citation.split('.')[0]}`
		};
	}
	const f = params.massFraction;
	return { value: f.value * p.bodyMass, unit: 'kg', kind: 'estimated', source: `${f.value} × body mass; ${f.source}` };
}

/** Validates the participant; returns every problem as a sentence naming the field. */
export function participantProblems(input: unknown): string[] {
	const r = participantBodySchema.safeParse(input);
	if (!r.success) {
		return r.error.issues.map((i) => {
			if (i.code === 'unrecognized_keys')
				return `unknown segment ${i.keys.map((k) => `"${k}"`).join(', ')}: use <side>.<segment>, e.g. right.thigh`;
			return i.path[0] === 'measuredLengths' ? `measured length ${i.path.slice(1).join('.')}: ${i.message}` : i.message;
		});
	}
	const p = r.data;
	const problems: string[] = [];
	for (const [key, value] of Object.entries(p.measuredLengths ?? {})) {
		if (value === undefined) continue;
		const segment = key.split('.')[1] as SegmentName;
		if (!(Number.isFinite(value) && value > 0)) {
			problems.push(`measured length of ${key} must be a positive number of metres (got ${value})`);
			continue;
		}
		const est = statureLength(segment, p.stature).value;
		if (value < PLAUSIBLE_LENGTH.min * est || value > PLAUSIBLE_LENGTH.max * est) {
			problems.push(
				`measured length of ${key} (${value} m) is not plausible for a stature of ${p.stature} m: expected ${(PLAUSIBLE_LENGTH.min * est).toFixed(3)}–${(PLAUSIBLE_LENGTH.max * est).toFixed(3)} m (is it in metres?)`
			);
		}
	}
	return problems;
}

const I3 = (): Mat3 => [
	[0, 0, 0],
	[0, 0, 0],
	[0, 0, 0]
];
const X: Vec3 = [1, 0, 0],
	Y: Vec3 = [0, 1, 0],
	Z: Vec3 = [0, 0, 1];
const neg = (v: Vec3): Vec3 => [-v[0], -v[1], -v[2]];

/**
 * One joint of a limb, proximal to distal: its DOF, the axis on the right side (`mirrored` axes are negated on the left, so
 * that positive is the same anatomical motion on both sides), and the sign rule. A joint with a `segment` moves that massive
 * segment (along −Y, or +X for the foot); the others move massless links of a multi-DOF joint.
 */
interface LimbJoint {
	joint: DofInfo['joint'];
	motion: string;
	axis: Vec3;
	mirrored?: boolean;
	segment?: SegmentName;
	along?: 'forward';
	positive: string;
}

/**
 * The limb trees, rooted at the hip or shoulder joint centre (heights and widths from stature proportions). Each segment
 * hangs from the joint centre that MODEL_ENDPOINTS (endpoints.ts) names as its proximal endpoint and places the next joint
 * centre (its distal endpoint) one segment length further on; the table loader refuses rows measured between other
 * endpoints unless the table file states why they may stand for these.
 */
const LIMB_CHAINS: Record<'arm' | 'leg', { height: string; width: string; joints: LimbJoint[] }> = {
	leg: {
		height: 'hipHeight',
		width: 'hipWidth',
		joints: [
			{ joint: 'hip', motion: 'flexion', axis: Z, positive: 'flexion: thigh forward, about the pelvis’ medio-lateral axis' },
			{
				joint: 'hip',
				motion: 'adduction',
				axis: X,
				mirrored: true,
				positive: 'adduction: thigh toward the midline, about the floating antero-posterior axis'
			},
			{
				joint: 'hip',
				motion: 'internalRotation',
				axis: Y,
				mirrored: true,
				segment: 'thigh',
				positive: 'internal rotation: front of the thigh turns toward the midline, about its long axis'
			},
			{
				joint: 'knee',
				motion: 'flexion',
				axis: neg(Z),
				segment: 'shank',
				positive: 'flexion: shank backward, about the thigh’s medio-lateral axis'
			},
			{ joint: 'ankle', motion: 'dorsiflexion', axis: Z, positive: 'dorsiflexion: toes up, about the shank’s medio-lateral axis' },
			{
				joint: 'ankle',
				motion: 'inversion',
				axis: X,
				mirrored: true,
				segment: 'foot',
				along: 'forward',
				positive: 'inversion: sole turns toward the midline, about the foot’s long axis'
			}
		]
	},
	arm: {
		height: 'shoulderHeight',
		width: 'shoulderWidth',
		joints: [
			{ joint: 'shoulder', motion: 'flexion', axis: Z, positive: 'flexion: arm forward, about the thorax’s medio-lateral axis' },
			{
				joint: 'shoulder',
				motion: 'abduction',
				axis: neg(X),
				mirrored: true,
				positive: 'abduction: arm away from the midline, about the floating antero-posterior axis'
			},
			{
				joint: 'shoulder',
				motion: 'internalRotation',
				axis: Y,
				mirrored: true,
				segment: 'upperarm',
				positive: 'internal rotation: front of the arm turns toward the midline, about its long axis'
			},
			{
				joint: 'elbow',
				motion: 'flexion',
				axis: Z,
				positive: 'flexion: forearm forward and up, about the upper arm’s medio-lateral axis'
			},
			{
				joint: 'forearm',
				motion: 'pronation',
				axis: Y,
				mirrored: true,
				segment: 'forearm',
				positive: 'pronation: palm turns from front to back, about the forearm’s long axis'
			},
			{
				joint: 'wrist',
				motion: 'flexion',
				axis: Z,
				positive: 'flexion: palm toward the front of the forearm, about the medio-lateral axis'
			},
			{
				joint: 'wrist',
				motion: 'ulnarDeviation',
				axis: X,
				mirrored: true,
				segment: 'hand',
				positive: 'ulnar deviation: hand toward the little-finger side, about the antero-posterior axis'
			}
		]
	}
};

/**
 * Scales the chosen limbs. Frames follow ISB (X anterior, Y superior, Z right) in the anatomical posture at
 * q = 0 (limbs hanging, feet flat); each limb's root is fixed to the ground at its proximal joint centre.
 */
export function scaleLimbs(input: ParticipantBody, tableId: SegmentTableId, limbs: readonly Limb[]): ScaledModel {
	const problems = participantProblems(input);
	if (!SEGMENT_TABLE_IDS.includes(tableId)) problems.push(`unknown table "${tableId}"; choose one of ${SEGMENT_TABLE_IDS.join(', ')}`);
	if (limbs.length === 0) problems.push('choose at least one limb');
	for (const l of limbs) if (!LIMBS.includes(l)) problems.push(`unknown limb "${l}"; choose from ${LIMBS.join(', ')}`);
	if (new Set(limbs).size !== limbs.length) problems.push('each limb may be listed once');
	if (problems.length) throw new ScalingError(problems);
	const p = participantBodySchema.parse(input);
	const sex = chooseSex(p, tableId);
	const H = p.stature;
	const dr = tables.drillis.lengths;

	const bodies: BodyInput[] = [];
	const dofs: DofInfo[] = [];
	const segments: ScaledSegment[] = [];
	const notes: string[] = [];
	const note = (text: string) => {
		if (!notes.includes(text)) notes.push(text);
	};

	function segmentFor(side: Side, segment: SegmentName): ScaledSegment {
		const params = sex.params(segment);
		const key = `${side}.${segment}` as LengthKey;
		const measured = p.measuredLengths?.[key];
		const length: Provenance =
			measured !== undefined
				? { value: measured, unit: 'm', kind: 'measured', source: 'measured for this participant' }
				: estimatedLength(segment, H, tableId, sex, params);
		const mass = segmentMass(segment, p, tableId, params);
		const L = length.value,
			m = mass.value;
		const g = params.gyration;
		const moment = (r: { value: number; source: string }): Provenance => ({
			value: m * (r.value * L) ** 2,
			unit: 'kg·m²',
			kind: 'estimated',
			source: `mass × (${r.value} × length)²; ${r.source}`
		});
		const def = tableId === 'dempster-winter-2009' ? tables.dempster.segments[segment] : tables.deLeva.segments[segment];
		const label = segment === 'upperarm' ? 'Upper arm' : segment[0].toUpperCase() + segment.slice(1);
		// a row applied between other endpoints than its own says so on the model page (the table file gives why)
		const sourceName = tableId === 'dempster-winter-2009' ? 'Winter 2009, Table 4.1' : 'de Leva 1996, Table 4';
		if (def.takenAs) note(`${label} (${sourceName}): ${def.takenAs.note}`);
		else if (length.kind === 'estimated' && tableId === 'dempster-winter-2009' && tables.drillis.lengths[segment].takenAs) {
			note(`${label} length (stature proportions, Winter 2009, Fig. 4.1): ${tables.drillis.lengths[segment].takenAs!.note}`);
		}
		const seg: ScaledSegment = {
			key,
			side,
			segment,
			proximal: def.proximal,
			distal: def.distal,
			...(def.takenAs ? { takenAs: { ...modelEndpointsOf(def), note: def.takenAs.note } } : {}),
			length,
			mass,
			comDistance: {
				value: params.comFraction.value * L,
				unit: 'm',
				kind: 'estimated',
				source: `${params.comFraction.value} × length; ${params.comFraction.source}`
			},
			inertia: { flexion: moment(g.flexion), abduction: moment(g.abduction), longitudinal: moment(g.longitudinal) }
		};
		segments.push(seg);
		return seg;
	}

	const add = (b: BodyInput, dof: DofInfo) => {
		bodies.push(b);
		dofs.push(dof);
		return bodies.length - 1;
	};
	const link = (name: string, parent: number, axis: Vec3, anchor: Vec3): BodyInput => ({
		name,
		parent,
		joint: { type: 'revolute', axis },
		anchor,
		mass: 0,
		com: [0, 0, 0],
		inertia: I3()
	});
	/** A massive segment along −Y (arm, leg) or +X (foot) from its joint centre. */
	const massive = (name: string, parent: number, axis: Vec3, anchor: Vec3, s: ScaledSegment, along: 'down' | 'forward'): BodyInput => {
		const I = s.inertia;
		const inertia: Mat3 =
			along === 'down'
				? [
						[I.abduction.value, 0, 0],
						[0, I.longitudinal.value, 0],
						[0, 0, I.flexion.value]
					]
				: [
						[I.longitudinal.value, 0, 0],
						[0, I.abduction.value, 0],
						[0, 0, I.flexion.value]
					];
		const d = s.comDistance.value;
		return {
			name,
			parent,
			joint: { type: 'revolute', axis },
			anchor,
			mass: s.mass.value,
			com: along === 'down' ? [0, -d, 0] : [d, 0, 0],
			inertia
		};
	};

	for (const limb of limbs) {
		const [side, kind] = limb.split('.') as [Side, 'arm' | 'leg'];
		const chain = LIMB_CHAINS[kind];
		const lateral = side === 'right' ? 1 : -1;
		const scaled = new Map(chain.joints.flatMap((j) => (j.segment ? [[j.segment, segmentFor(side, j.segment)] as const] : [])));
		let parent = -1;
		let anchor: Vec3 = [0, dr[chain.height].fraction.value * H, (lateral * dr[chain.width].fraction.value * H) / 2];
		for (const j of chain.joints) {
			const axis = j.mirrored && side === 'left' ? neg(j.axis) : j.axis;
			const seg = j.segment && scaled.get(j.segment);
			const name = `${side}.${j.joint}.${j.motion}`;
			const body = seg ? massive(`${side}.${j.segment}`, parent, axis, anchor, seg, j.along ?? 'down') : link(name, parent, axis, anchor);
			parent = add(body, { name, side, joint: j.joint, motion: j.motion, unit: 'rad', positive: j.positive });
			// the next joint sits at this segment's distal end, or (after a link) at the same point
			anchor = seg ? [0, -seg.length.value, 0] : [0, 0, 0];
		}
	}
	if (tableId === 'dempster-winter-2009') {
		notes.push(
			'Winter (2009) Table 4.1 gives one radius of gyration per segment; Momentry uses it for both transverse axes and takes the longitudinal radius from de Leva (1996) male values, as the table file records.'
		);
	}
	if (limbs.some((l) => l.endsWith('leg'))) {
		notes.push('Foot: its long axis is taken horizontal and anterior through the ankle joint centre (Momentry’s simplification).');
	}
	notes.push(
		'Shoulder angles use the Cardan sequence flexion, abduction, internal rotation (as the hip), not ISB’s Euler sequence for the humerus, which is singular with the arm at the side.'
	);
	const t = SEGMENT_TABLES[tableId];
	return {
		table: { id: tableId, title: t.title, citation: t.citation },
		sexUsed: { value: sex.value, reason: sex.reason },
		bodyMass: p.bodyMass,
		stature: p.stature,
		limbs: [...limbs],
		model: { name: `${limbs.join(' + ')} (${t.title})`, bodies },
		dofs,
		segments,
		notes
	};
}

export interface ComparisonRow {
	key: LengthKey;
	/** One entry per table; `null` with a reason where the table cannot serve this participant. */
	byTable: Record<
		SegmentTableId,
		| { length: number; mass: number; comDistance: number; inertiaFlexion: number; inertiaAbduction: number; inertiaLongitudinal: number }
		| { unavailable: string }
	>;
	/** Largest minus smallest over the tables that apply, as a fraction of their mean (how much the choice matters). */
	spread: { mass: number; comDistance: number; inertiaFlexion: number };
}

/** The same participant under every table, segment by segment. */
export function compareTables(p: ParticipantBody, limbs: readonly Limb[]): ComparisonRow[] {
	const results = new Map<SegmentTableId, ScaledModel | string>();
	for (const id of SEGMENT_TABLE_IDS) {
		try {
			results.set(id, scaleLimbs(p, id, limbs));
		} catch (e) {
			if (e instanceof ScalingError && participantProblems(p).length === 0) results.set(id, e.message);
			else throw e;
		}
	}
	const first = [...results.values()].find((r): r is ScaledModel => typeof r !== 'string');
	if (!first) throw new ScalingError([...new Set([...results.values()] as string[])]);
	return first.segments.map((seg) => {
		const byTable = {} as ComparisonRow['byTable'];
		const vals: { mass: number[]; comDistance: number[]; inertiaFlexion: number[] } = { mass: [], comDistance: [], inertiaFlexion: [] };
		for (const [id, r] of results) {
			if (typeof r === 'string') {
				byTable[id] = { unavailable: r };
				continue;
			}
			const s = r.segments.find((x) => x.key === seg.key)!;
			const row = {
				length: s.length.value,
				mass: s.mass.value,
				comDistance: s.comDistance.value,
				inertiaFlexion: s.inertia.flexion.value,
				inertiaAbduction: s.inertia.abduction.value,
				inertiaLongitudinal: s.inertia.longitudinal.value
			};
			byTable[id] = row;
			vals.mass.push(row.mass);
			vals.comDistance.push(row.comDistance);
			vals.inertiaFlexion.push(row.inertiaFlexion);
		}
		const spread = (a: number[]) => (a.length < 2 ? 0 : (Math.max(...a) - Math.min(...a)) / (a.reduce((x, y) => x + y, 0) / a.length));
		return {
			key: seg.key,
			byTable,
			spread: { mass: spread(vals.mass), comDistance: spread(vals.comDistance), inertiaFlexion: spread(vals.inertiaFlexion) }
		};
	});
}
