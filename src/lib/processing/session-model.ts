// A session's engine model: scaled limbs, how each limb's base is held (fixed orientation or prescribed motion), and point-mass loads.
import { z } from 'zod';
import { rotationSchema, type BodyInput, type Mat3, type ModelInput, type Vec3 } from '../dynamics/model';
import { LIMBS, scaleLimbs, type DofInfo, type Limb, type ParticipantBody, type ScaledModel } from '../anthropometry/scale';
import { SEGMENT_TABLE_IDS, tables, type SegmentTableId } from '../anthropometry/tables';
import type { ExpectedChannel } from './recording';

const finite = z.number({ error: 'must be a number' }).refine(Number.isFinite, 'must be a finite number');
const vec3 = z.tuple([finite, finite, finite], { error: 'must be three numbers [x, y, z]' });

export const BASE_DOFS = ['px', 'py', 'pz', 'rx', 'ry', 'rz'] as const;
export type BaseDof = (typeof BASE_DOFS)[number];

export const fixedBaseSchema = z
	.object({
		kind: z.literal('fixed'),
		/**
		 * upright: the scaled model as it is (thorax or pelvis upright, limb hanging at q = 0);
		 * thigh-on-seat (legs only): the limb root turned +90° about the lab Z axis, so at q = 0 the thigh lies
		 * horizontal, pointing anterior, and hip angles are measured from that seated posture;
		 * custom: the limb root turned by R = Rx(a)·Ry(b)·Rz(c) from cardanXYZDeg [a, b, c] (degrees), or by
		 * rotationMatrix R (row-major, body → lab) as typed: within ‖RᵀR − I‖ ≤ 1e-5 it is replaced by the nearest
		 * rotation, else refused with the numbers (src/lib/dynamics/rotation.ts).
		 */
		orientation: z.enum(['upright', 'thigh-on-seat', 'custom'], { error: 'orientation must be "upright", "thigh-on-seat" or "custom"' }),
		cardanXYZDeg: vec3.optional(),
		rotationMatrix: rotationSchema.optional(),
		/** Lab position of the limb's proximal joint centre (hip or shoulder), m; default the scaled model's. */
		positionM: vec3.optional()
	})
	.superRefine((b, ctx) => {
		if (b.orientation === 'custom' && !b.cardanXYZDeg && !b.rotationMatrix)
			ctx.addIssue({
				code: 'custom',
				path: ['cardanXYZDeg'],
				message:
					'a custom orientation needs cardanXYZDeg: three angles (°), X, then Y, then Z (or rotationMatrix: the 3×3 rotation, row by row)'
			});
		if (b.cardanXYZDeg && b.rotationMatrix)
			ctx.addIssue({
				code: 'custom',
				path: ['rotationMatrix'],
				message: 'give the orientation once: cardanXYZDeg or rotationMatrix, not both'
			});
		if (b.orientation !== 'custom' && b.cardanXYZDeg)
			ctx.addIssue({
				code: 'custom',
				path: ['cardanXYZDeg'],
				message: `cardanXYZDeg is only used with orientation "custom" (this base is "${b.orientation}")`
			});
		if (b.orientation !== 'custom' && b.rotationMatrix)
			ctx.addIssue({
				code: 'custom',
				path: ['rotationMatrix'],
				message: `rotationMatrix is only used with orientation "custom" (this base is "${b.orientation}")`
			});
	});

/** The limb's base follows the recording's `<limb>.base.px … rz` columns (prescribed motion). */
export const movingBaseSchema = z.object({ kind: z.literal('moving') });

export const baseSchema = z.discriminatedUnion('kind', [fixedBaseSchema, movingBaseSchema], {
	error: 'base kind must be "fixed" or "moving"'
});
export type BaseSetup = z.infer<typeof baseSchema>;

export const LOAD_SEGMENTS = ['hand', 'forearm', 'shank', 'foot'] as const;
export const loadSchema = z.object({
	limb: z.enum(LIMBS, { error: `limb must be one of ${LIMBS.join(', ')}` }),
	segment: z.enum(LOAD_SEGMENTS, { error: `segment must be one of ${LOAD_SEGMENTS.join(', ')}` }),
	massKg: finite.refine((m) => m > 0 && m <= 100, 'must be more than 0 and at most 100 kg'),
	/** Where the mass sits, in that segment's frame, from its proximal joint centre (m). */
	pointM: vec3.refine((p) => Math.hypot(...p) <= 2, 'must lie within 2 m of the segment’s proximal joint centre'),
	label: z.string().max(200).optional()
});
export type LoadSetup = z.infer<typeof loadSchema>;

/** Accepted distance between the hip joint centres (m) when given: anything outside is a typing error, not a pelvis (our choice). */
export const HIP_WIDTH_RANGE_M = { min: 0.1, max: 0.5 } as const;

/**
 * Gait set-up: both legs hang from one pelvis that moves as the recording's `pelvis.px … pelvis.rz` columns prescribe.
 * `hipWidthM`: distance between the hip joint centres (m); default the stature proportion the limb roots use
 * (PELVIS_HIP_WIDTH_SOURCE).
 */
export const pelvisSchema = z.object({
	hipWidthM: finite
		.refine((v) => v >= HIP_WIDTH_RANGE_M.min && v <= HIP_WIDTH_RANGE_M.max, {
			message: `must be from ${HIP_WIDTH_RANGE_M.min} to ${HIP_WIDTH_RANGE_M.max} m (the distance between the hip joint centres)`
		})
		.optional()
});
export type PelvisSetup = z.infer<typeof pelvisSchema>;

export const sessionSetupSchema = z
	.object({
		table: z.enum(SEGMENT_TABLE_IDS as [SegmentTableId, ...SegmentTableId[]], {
			error: `table must be one of ${SEGMENT_TABLE_IDS.join(', ')}`
		}),
		limbs: z.array(z.enum(LIMBS, { error: `limb must be one of ${LIMBS.join(', ')}` })).min(1, 'choose at least one limb'),
		bases: z.partialRecord(z.enum(LIMBS), baseSchema).default({}),
		loads: z.array(loadSchema).default([]),
		/** Both legs on one moving pelvis (gait); then the limbs are legs and per-limb bases are not used. */
		pelvis: pelvisSchema.optional(),
		/** Acceleration due to gravity in lab axes (X anterior, Y superior, Z right), m/s². */
		gravity: vec3.default([0, -9.81, 0])
	})
	.superRefine((s, ctx) => {
		if (new Set(s.limbs).size !== s.limbs.length)
			ctx.addIssue({ code: 'custom', path: ['limbs'], message: 'each limb may be listed once' });
		if (s.pelvis) {
			const arms = s.limbs.filter((l) => !l.endsWith('.leg'));
			if (arms.length)
				ctx.addIssue({
					code: 'custom',
					path: ['limbs'],
					message: `a pelvis set-up carries legs only (right.leg, left.leg); remove ${arms.join(', ')}`
				});
			for (const limb of Object.keys(s.bases))
				ctx.addIssue({
					code: 'custom',
					path: ['bases', limb],
					message: `with a pelvis both legs hang from it, so ${limb} takes no base of its own: remove bases.${limb} (the pelvis moves as the pelvis.px … pelvis.rz columns say)`
				});
		}
		for (const [limb, base] of Object.entries(s.bases)) {
			if (!s.limbs.includes(limb as Limb))
				ctx.addIssue({
					code: 'custom',
					path: ['bases', limb],
					message: `a base is set for ${limb}, which is not among the session's limbs (${s.limbs.join(', ')})`
				});
			if (base?.kind === 'fixed' && base.orientation === 'thigh-on-seat' && !limb.endsWith('.leg'))
				ctx.addIssue({ code: 'custom', path: ['bases', limb, 'orientation'], message: `"thigh-on-seat" applies to a leg, not to ${limb}` });
		}
		s.loads.forEach((l, i) => {
			if (!s.limbs.includes(l.limb))
				ctx.addIssue({
					code: 'custom',
					path: ['loads', i, 'limb'],
					message: `load on ${l.limb}, which is not among the session's limbs (${s.limbs.join(', ')})`
				});
			const arm = l.limb.endsWith('.arm');
			if (arm !== (l.segment === 'hand' || l.segment === 'forearm'))
				ctx.addIssue({
					code: 'custom',
					path: ['loads', i, 'segment'],
					message: `${l.limb} has no ${l.segment}: choose ${arm ? 'hand or forearm' : 'shank or foot'}`
				});
		});
	});
export type SessionSetup = z.infer<typeof sessionSetupSchema>;
export type SessionSetupInput = z.input<typeof sessionSetupSchema>;

/** One DOF of the session model (one per engine body), anatomical or a limb-base coordinate. */
export interface SessionDof {
	/** The column name: `<side>.<joint>.<motion>`, `<limb>.base.<px|py|pz|rx|ry|rz>` or `pelvis.<px|…|rz>`. */
	name: string;
	/** The limb, or 'pelvis' for the shared pelvis's coordinates of a gait set-up. */
	limb: Limb | 'pelvis';
	side: DofInfo['side'] | 'midline';
	joint: DofInfo['joint'] | 'base';
	motion: string;
	/** rad for revolute joints, m for the prismatic base coordinates. */
	unit: 'rad' | 'm';
	kind: 'angle' | 'position';
	/** Prescribed base motion: in the kinematics, not among the reported joint moments. */
	base: boolean;
	/** The sign rule of the angle; the moment's positive sense is the same rotation. */
	positive: string;
	/** Index of the engine body whose joint this is. */
	body: number;
	/** The anatomical joint centre the DOF belongs to (reactions are reported per joint centre). */
	jointCentre: string;
}

export interface LoadApplied {
	limb: Limb;
	segment: string;
	body: string;
	label?: string;
	massKg: number;
	pointM: Vec3;
	before: { mass: number; com: Vec3; inertia: Mat3 };
	after: { mass: number; com: Vec3; inertia: Mat3 };
}

export interface SessionModel {
	model: ModelInput;
	/** Gait set-up: the distance between the hip joint centres used and where it comes from; null without a pelvis. */
	pelvis: { hipWidthM: number; source: string } | null;
	dofs: SessionDof[];
	/** The channels a recording must contain, in model order (angles and base positions; plate channels come from the trial's plates). */
	expected: (ExpectedChannel & { kind: 'angle' | 'position' })[];
	/** The scaled parameters used (limb bodies after loads), for provenance. */
	parameters: ScaledModel;
	loadsApplied: LoadApplied[];
	setup: SessionSetup;
	bodyMass: number;
}

export class SessionModelError extends Error {
	constructor(public readonly problems: string[]) {
		super(problems.join('; '));
		this.name = 'SessionModelError';
	}
}

/** Problems of a session set-up as sentences naming the field; empty when it is valid. */
export function sessionSetupProblems(input: unknown): string[] {
	const r = sessionSetupSchema.safeParse(input);
	if (r.success) return [];
	return r.error.issues.map((i) => `${i.path.length ? i.path.join('.') : 'setup'}: ${i.message}`);
}

const rad = Math.PI / 180;
type M3 = number[][];
const mul = (A: M3, B: M3): Mat3 =>
	[0, 1, 2].map((r) => [0, 1, 2].map((c) => A[r][0] * B[0][c] + A[r][1] * B[1][c] + A[r][2] * B[2][c])) as Mat3;
const rotX = (a: number): Mat3 => [
	[1, 0, 0],
	[0, Math.cos(a), -Math.sin(a)],
	[0, Math.sin(a), Math.cos(a)]
];
const rotY = (a: number): Mat3 => [
	[Math.cos(a), 0, Math.sin(a)],
	[0, 1, 0],
	[-Math.sin(a), 0, Math.cos(a)]
];
const rotZ = (a: number): Mat3 => [
	[Math.cos(a), -Math.sin(a), 0],
	[Math.sin(a), Math.cos(a), 0],
	[0, 0, 1]
];
/** R = Rx(a)·Ry(b)·Rz(c): body → lab, the same sequence as the moving base's rx, ry, rz chain. */
export function cardanXYZ(aRad: number, bRad: number, cRad: number): Mat3 {
	return mul(mul(rotX(aRad), rotY(bRad)), rotZ(cRad));
}
/** Snap rounding-level entries (cos 90° = 6e-17) to exact 0/±1 so the engine keeps its exact-axis paths where it can. */
const clean = (R: Mat3): Mat3 =>
	R.map((row) => row.map((v) => (Math.abs(v) < 1e-15 ? 0 : Math.abs(Math.abs(v) - 1) < 1e-15 ? Math.sign(v) : v))) as Mat3;

/** Rotation of the limb root for a fixed base (body → lab), or null for the scaled model's own (upright) posture. */
export function fixedBaseRotation(base: z.infer<typeof fixedBaseSchema>): Mat3 | null {
	if (base.orientation === 'upright') return null;
	// hip flexion is +Z on both sides: +90° about lab Z turns the thigh's −Y onto lab +X (anterior)
	if (base.orientation === 'thigh-on-seat') return clean(rotZ(Math.PI / 2));
	// the schema has already made a typed matrix orthonormal (nearest rotation)
	if (base.rotationMatrix) return clean(base.rotationMatrix);
	const [a, b, c] = base.cardanXYZDeg!;
	return clean(cardanXYZ(a * rad, b * rad, c * rad));
}

/**
 * Adds a rigid point mass mp at p to a body (mass m, COM c, inertia I about c, body axes): mass m + mp,
 * COM c' = (m c + mp p)/(m + mp), inertia about c' by the parallel-axis theorem applied to both parts:
 * I' = I + m (|d|² 1 − d dᵀ) + mp (|e|² 1 − e eᵀ), d = c − c', e = p − c'.
 */
export function addPointMass(m: number, c: Vec3, I: Mat3, mp: number, p: Vec3): { mass: number; com: Vec3; inertia: Mat3 } {
	const M = m + mp;
	const cn = [0, 1, 2].map((k) => (m * c[k] + mp * p[k]) / M) as Vec3;
	const d = [0, 1, 2].map((k) => c[k] - cn[k]);
	const e = [0, 1, 2].map((k) => p[k] - cn[k]);
	const dd = d[0] ** 2 + d[1] ** 2 + d[2] ** 2,
		ee = e[0] ** 2 + e[1] ** 2 + e[2] ** 2;
	const inertia = [0, 1, 2].map((r) =>
		[0, 1, 2].map((s) => I[r][s] + m * ((r === s ? dd : 0) - d[r] * d[s]) + mp * ((r === s ? ee : 0) - e[r] * e[s]))
	) as Mat3;
	return { mass: M, com: cn, inertia };
}

const ZERO3 = (): Mat3 => [
	[0, 0, 0],
	[0, 0, 0],
	[0, 0, 0]
];
const BASE_AXIS: Record<BaseDof, Vec3> = { px: [1, 0, 0], py: [0, 1, 0], pz: [0, 0, 1], rx: [1, 0, 0], ry: [0, 1, 0], rz: [0, 0, 1] };
const PELVIS_POSITIVE: Record<BaseDof, string> = {
	px: 'pelvis (midpoint of the hip joint centres) position along lab X (anterior), m',
	py: 'pelvis position along lab Y (superior), m',
	pz: 'pelvis position along lab Z (right), m',
	rx: 'pelvis rotation about lab X, first of the Cardan X-Y-Z sequence',
	ry: 'pelvis rotation about the once-rotated Y axis, second of the Cardan X-Y-Z sequence',
	rz: 'pelvis rotation about the twice-rotated Z axis, third of the Cardan X-Y-Z sequence'
};

/** Where the default distance between the hip joint centres comes from (the stature proportion the limb roots use). */
export const PELVIS_HIP_WIDTH_SOURCE = `${tables.drillis.lengths.hipWidth.fraction.value} × stature: ${tables.drillis.lengths.hipWidth.fraction.source}, taken as the distance between the hip joint centres as for the limb roots (our reading)`;

/** The distance between the hip joint centres of a gait set-up (m) and its source. */
export function pelvisHipWidth(body: ParticipantBody, pelvis: PelvisSetup): { hipWidthM: number; source: string } {
	if (pelvis.hipWidthM !== undefined) return { hipWidthM: pelvis.hipWidthM, source: 'entered in the session set-up' };
	return { hipWidthM: tables.drillis.lengths.hipWidth.fraction.value * body.stature, source: PELVIS_HIP_WIDTH_SOURCE };
}

const BASE_POSITIVE: Record<BaseDof, string> = {
	px: 'limb base (proximal joint centre) position along lab X (anterior), m',
	py: 'limb base position along lab Y (superior), m',
	pz: 'limb base position along lab Z (right), m',
	rx: 'limb base rotation about lab X, first of the Cardan X-Y-Z sequence',
	ry: 'limb base rotation about the once-rotated Y axis, second of the Cardan X-Y-Z sequence',
	rz: 'limb base rotation about the twice-rotated Z axis, third of the Cardan X-Y-Z sequence'
};

/**
 * Builds the engine model of a session: each limb scaled from the chosen table, its base fixed in a stated
 * orientation or moving as prescribed by the recording, point-mass loads merged into their segments.
 * Throws SessionModelError (set-up problems) or ScalingError (participant problems).
 */
export function buildSessionModel(body: ParticipantBody, setupInput: SessionSetupInput | SessionSetup): SessionModel {
	const problems = sessionSetupProblems(setupInput);
	if (problems.length) throw new SessionModelError(problems);
	const setup = sessionSetupSchema.parse(setupInput);
	const scaled = scaleLimbs(body, setup.table, setup.limbs);

	// loads first, on the scaled limb bodies (their indices are still the scaled model's)
	const limbBodies: BodyInput[] = scaled.model.bodies.map((b) => structuredClone(b));
	const loadsApplied: LoadApplied[] = [];
	const loadNotes: string[] = [];
	for (const load of setup.loads) {
		const side = load.limb.split('.')[0];
		const name = `${side}.${load.segment}`;
		const idx = limbBodies.findIndex((b) => b.name === name);
		if (idx < 0) throw new SessionModelError([`load on ${load.limb} ${load.segment}: the model has no body "${name}"`]);
		const b = limbBodies[idx];
		const before = { mass: b.mass, com: [...b.com] as Vec3, inertia: b.inertia.map((r) => [...r]) as Mat3 };
		const after = addPointMass(b.mass, b.com, b.inertia, load.massKg, load.pointM);
		b.mass = after.mass;
		b.com = after.com;
		b.inertia = after.inertia;
		loadsApplied.push({
			limb: load.limb,
			segment: load.segment,
			body: name,
			label: load.label,
			massKg: load.massKg,
			pointM: load.pointM,
			before,
			after
		});
		loadNotes.push(
			`${name} carries ${load.label ? `“${load.label}”, ` : ''}a ${load.massKg} kg point mass at [${load.pointM.join(', ')}] m (segment frame), merged as a rigid point mass: segment mass ${before.mass.toFixed(3)} → ${after.mass.toFixed(3)} kg.`
		);
	}

	const bodies: BodyInput[] = [];
	const dofs: SessionDof[] = [];
	const newIndex = new Int32Array(limbBodies.length).fill(-1);
	let currentJoint = '';
	/** Six massless base coordinates `<prefix>.<px|…|rz>`, a new root chain (px at the ground, each next on the last). */
	const pushBase = (prefix: string, limb: SessionDof['limb'], side: SessionDof['side'], positive: Record<BaseDof, string>) => {
		for (const dof of BASE_DOFS) {
			const prismatic = dof.startsWith('p');
			bodies.push({
				name: `${prefix}.${dof}`,
				parent: dof === 'px' ? -1 : bodies.length - 1,
				joint: { type: prismatic ? 'prismatic' : 'revolute', axis: BASE_AXIS[dof] },
				anchor: [0, 0, 0],
				mass: 0,
				com: [0, 0, 0],
				inertia: ZERO3(),
				description: positive[dof]
			});
			dofs.push({
				name: `${prefix}.${dof}`,
				limb,
				side,
				joint: 'base',
				motion: dof,
				unit: prismatic ? 'm' : 'rad',
				kind: prismatic ? 'position' : 'angle',
				base: true,
				positive: positive[dof],
				body: bodies.length - 1,
				jointCentre: prefix
			});
		}
	};
	// gait: six massless pelvis coordinates first (as a moving base's), both legs' hip joint centres on its Z axis
	const pelvis = setup.pelvis ? pelvisHipWidth(body, setup.pelvis) : null;
	if (pelvis) pushBase('pelvis', 'pelvis', 'midline', PELVIS_POSITIVE);
	for (const limb of setup.limbs) {
		const base = setup.bases[limb] ?? { kind: 'fixed' as const, orientation: 'upright' as const };
		const side = limb.split('.')[0] as 'right' | 'left';
		const members = scaled.dofs.map((d, i) => ({ d, i })).filter(({ i }) => limbOf(scaled, i) === limb);
		let rootParent = -1;
		if (pelvis) rootParent = BASE_DOFS.length - 1;
		else if (base.kind === 'moving') {
			pushBase(`${limb}.base`, limb, side, BASE_POSITIVE);
			rootParent = bodies.length - 1;
		}
		for (const { d, i } of members) {
			const b = limbBodies[i];
			const isRoot = b.parent < 0;
			const nb: BodyInput = { ...b, parent: isRoot ? rootParent : newIndex[b.parent] };
			// the hip joint centre half the hip width to the side of the pelvis origin, along its Z axis (right at +Z)
			if (isRoot && pelvis) nb.anchor = [0, 0, ((side === 'right' ? 1 : -1) * pelvis.hipWidthM) / 2];
			else if (isRoot && base.kind === 'moving') nb.anchor = [0, 0, 0];
			else if (isRoot && base.kind === 'fixed') {
				const R = fixedBaseRotation(base);
				if (R) nb.rotation = R;
				if (base.positionM) nb.anchor = [...base.positionM];
			}
			newIndex[i] = bodies.length;
			bodies.push(nb);
			// a new joint centre starts wherever the joint point moves away from the parent's origin
			if (isRoot || b.anchor.some((v) => v !== 0)) currentJoint = `${d.side}.${d.joint}`;
			dofs.push({
				name: d.name,
				limb,
				side: d.side,
				joint: d.joint,
				motion: d.motion,
				unit: 'rad',
				kind: 'angle',
				base: false,
				positive: d.positive,
				body: bodies.length - 1,
				jointCentre: currentJoint
			});
		}
	}

	const baseNotes = setup.limbs.map((limb) => {
		const base = setup.bases[limb];
		if (pelvis)
			return `${limb}: hangs from the pelvis, its hip joint centre ${(pelvis.hipWidthM / 2).toFixed(4)} m to the ${limb.startsWith('right') ? 'right (+Z)' : 'left (−Z)'} of the pelvis origin along the pelvis Z axis.`;
		if (!base || base.kind === 'fixed') {
			const o = base?.orientation ?? 'upright';
			const where = base?.positionM ? ` with its proximal joint centre at [${base.positionM.join(', ')}] m` : '';
			if (o === 'thigh-on-seat')
				return `${limb}: base fixed, thigh on the seat (limb root turned 90° about lab Z; hip angles are measured from the seated posture)${where}. The seat's support of the thigh is not modelled: hip moments include holding the thigh's own weight; knee and ankle moments are unaffected.`;
			if (o === 'custom' && base?.rotationMatrix)
				return `${limb}: base fixed, turned by the rotation matrix ${JSON.stringify(base.rotationMatrix)} (body → lab, as typed made orthonormal)${where}.`;
			if (o === 'custom') return `${limb}: base fixed, turned by Cardan X-Y-Z angles [${base?.cardanXYZDeg?.join(', ')}]°${where}.`;
			return `${limb}: base fixed upright${where}.`;
		}
		return `${limb}: base moving as prescribed by the recording's ${limb}.base.px…rz columns (proximal joint centre position, then Cardan X-Y-Z rotation); its six coordinates are massless and their forces are not reported.`;
	});

	const pelvisNotes = pelvis
		? [
				`Pelvis: both legs hang from one pelvis moving as prescribed by the recording's pelvis.px…pz (the midpoint of the hip joint centres, lab axes, m) and pelvis.rx…rz (Cardan X-Y-Z) columns; hip joint centres ${pelvis.hipWidthM.toFixed(4)} m apart (${pelvis.source}). The pelvis is massless and its six coordinates are not reported: hip, knee and ankle moments depend only on the segments beyond each joint, the external loads on them and the pelvis's motion, so they are the same as with each leg on its own moving base.`
			]
		: [];
	const model: ModelInput = {
		name: `${pelvis ? 'pelvis + ' : ''}${scaled.model.name}${setup.loads.length ? ' with loads' : ''}`,
		bodies
	};
	const parameters: ScaledModel = {
		...scaled,
		model: { name: scaled.model.name, bodies: limbBodies },
		notes: [...scaled.notes, ...pelvisNotes, ...baseNotes, ...loadNotes]
	};
	const expected: SessionModel['expected'] = dofs.map((d) => ({ name: d.name, kind: d.kind }));
	return { model, dofs, expected, parameters, loadsApplied, setup, bodyMass: scaled.bodyMass, pelvis };
}

/** Which limb body i of a scaled model belongs to (bodies of one limb are consecutive from its root). */
function limbOf(scaled: ScaledModel, i: number): Limb {
	let r = i;
	while (scaled.model.bodies[r].parent >= 0) r = scaled.model.bodies[r].parent;
	const roots = scaled.model.bodies.map((b, k) => (b.parent < 0 ? k : -1)).filter((k) => k >= 0);
	return scaled.limbs[roots.indexOf(r)];
}
