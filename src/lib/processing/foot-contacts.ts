// The feet in the lab and which foot made each plate contact: forward kinematics of the session model's legs (with the
// pelvis or base motion) gives each foot's ankle joint centre ("heel") and distal end ("toe") per sample; a contact goes
// to the foot whose ankle-to-toe segment lies over the plate for most of it. Pure TypeScript, no I/O.
// Rules: docs/processing.md ("Ground reaction forces in the moments").
import { compileModel, createWorkspace, type Model } from '../dynamics/index';
import { placeBodies } from '../dynamics/kinematics';
import {
	ForceError,
	findContacts,
	plateContains,
	plateLoadsAtAngleRate,
	plateNormal,
	type Contact,
	type ContactOptions,
	type ForcePlate,
	type LabLoads,
	type PlateSignals
} from './forces/index';
import type { Foot, FootPath, GaitPaths } from './gait';
import type { SessionModel } from './session-model';

/** A foot counts as over a plate when its ankle and its toe lie within this distance (m) of the outline (our choice: the model's foot is a line from the ankle, a real heel lies some 5 cm behind it). */
export const DEFAULT_FOOT_MARGIN_M = 0.05;
/** Share of a contact's samples a foot must be over the plate for the contact to be that foot's ("most of the contact"). */
export const FOOT_OVER_SHARE = 0.5;
/**
 * Share of a contact's samples with both feet over the plate at once from which the contact counts as shared (our
 * choice: a swinging foot crosses a 0.6 m plate in well under a tenth of the other foot's stance; two feet standing on
 * one plate stay there much longer).
 */
export const SHARED_SHARE = 0.1;
/**
 * Where the plate's centre of pressure is known, a foot over the plate bears the load only if the CoP lies within this
 * distance (m) of its ankle-to-toe line, measured across the plate's surface (our choice: the CoP of one foot's stance
 * stays under that foot, within about half a foot's width of the line; a swinging foot passing beside it is a step
 * width away, some 0.1–0.3 m).
 */
export const DEFAULT_COP_MARGIN_M = 0.08;

/** The engine bodies of one foot and its length (the model's foot runs from the ankle joint centre along its +X). */
function footOf(built: SessionModel, side: Foot): { body: number; lengthM: number } | null {
	const body = built.model.bodies.findIndex((b) => b.name === `${side}.foot`);
	if (body < 0) return null;
	const seg = built.parameters.segments.find((s) => s.key === `${side}.foot`);
	if (!seg) return null;
	return { body, lengthM: seg.length.value };
}

/** Index of each leg's root body (its hip joint centre), or −1. */
function hipBody(built: SessionModel, side: Foot): number {
	return built.model.bodies.findIndex((b) => b.name === `${side}.hip.flexion`);
}

/** The engine body carrying each foot in a session model (for external loads), or −1 where the model has no such foot. */
export function footBodies(built: SessionModel): Record<Foot, number> {
	return { left: footOf(built, 'left')?.body ?? -1, right: footOf(built, 'right')?.body ?? -1 };
}

/**
 * Per sample, the lab positions (m, interleaved x y z) of each foot's ankle joint centre (`heel`) and distal end (`toe`),
 * and of the pelvis: the pelvis origin of a gait set-up (the midpoint of the hip joint centres), else the midpoint of
 * the two legs' hip joint centres (the one hip's centre with one leg). By forward kinematics of `angles` (one array per
 * DOF in built.dofs order, SI units: the filtered angles and base coordinates).
 */
export function footPoints(built: SessionModel, angles: readonly ArrayLike<number>[], model: Model = compileModel(built.model)): GaitPaths {
	const n = model.n;
	if (angles.length !== n) throw new RangeError(`footPoints: ${angles.length} channels given; the session model has ${n} DOFs`);
	const frames = angles[0]?.length ?? 0;
	const feet = (['left', 'right'] as const).map((side) => ({ side, foot: footOf(built, side), hip: hipBody(built, side) }));
	const pelvisBody = built.pelvis ? built.model.bodies.findIndex((b) => b.name === 'pelvis.rz') : -1;
	const hips = feet.filter((f) => f.hip >= 0).map((f) => f.hip);
	const paths: { side: Foot; body: number; L: number; heel: Float64Array; toe: Float64Array }[] = feet
		.filter((f) => f.foot !== null)
		.map((f) => ({
			side: f.side,
			body: f.foot!.body,
			L: f.foot!.lengthM,
			heel: new Float64Array(3 * frames),
			toe: new Float64Array(3 * frames)
		}));
	const pelvis = new Float64Array(3 * frames);
	const ws = createWorkspace(model);
	const q = new Float64Array(n);
	for (let k = 0; k < frames; k++) {
		for (let j = 0; j < n; j++) q[j] = angles[j][k];
		placeBodies(model, ws, q);
		const { pw, Rw } = ws;
		const k3 = 3 * k;
		for (const p of paths) {
			const b3 = 3 * p.body,
				b9 = 9 * p.body;
			for (let c = 0; c < 3; c++) {
				p.heel[k3 + c] = pw[b3 + c];
				p.toe[k3 + c] = pw[b3 + c] + Rw[b9 + 3 * c] * p.L; // + R·(L, 0, 0)
			}
		}
		for (let c = 0; c < 3; c++) {
			if (pelvisBody >= 0) pelvis[k3 + c] = pw[3 * pelvisBody + c];
			else if (hips.length) {
				let s = 0;
				for (const h of hips) s += pw[3 * h + c];
				pelvis[k3 + c] = s / hips.length;
			} else pelvis[k3 + c] = NaN;
		}
	}
	const out: GaitPaths = { pelvis };
	for (const p of paths) out[p.side] = { heel: p.heel, toe: p.toe };
	return out;
}

/** A contact after the foot assignment. `id` is `<plate>#<k>`: k-th contact of that plate in time order (0-based). */
export interface AssignedContact extends Contact {
	id: string;
	/** Who decided the foot: the model (feet over the plate), the person (an override), or nobody (foot null). */
	assignedBy: 'model' | 'user' | null;
	/**
	 * Share of the contact's samples each foot bore it: its ankle-to-toe segment over the plate and, where the CoP is
	 * known and given, the CoP near that segment (NaN: the model has no such foot).
	 */
	overShare: Record<Foot, number>;
	/** Share of the samples with both feet over it at once. */
	bothShare: number;
}

export interface AssignOptions {
	/** Default DEFAULT_FOOT_MARGIN_M (5 cm). */
	marginM?: number;
	/** Manual feet by contact id (`<plate>#<k>`): a foot, or null for "no foot" (the contact is then not used). */
	overrides?: Readonly<Record<string, Foot | null>>;
	/** Each plate's CoP in lab axes at the angle rate (x y z per sample, NaN where unloaded), by plate name. */
	cop?: Readonly<Record<string, ArrayLike<number>>>;
	/** Default DEFAULT_COP_MARGIN_M (8 cm). */
	copMarginM?: number;
}

/** Distance (m) from point c to the segment a–b, across the surface whose unit normal is nrm (the normal part left out). */
function distanceAcross(c: ArrayLike<number>, a: ArrayLike<number>, b: ArrayLike<number>, k3: number, nrm: readonly number[]): number {
	// runs per loaded sample and foot: scalars only, nothing allocated
	const [n0, n1, n2] = nrm;
	const d0 = b[k3] - a[k3],
		d1 = b[k3 + 1] - a[k3 + 1],
		d2 = b[k3 + 2] - a[k3 + 2];
	const e0 = c[k3] - a[k3],
		e1 = c[k3 + 1] - a[k3 + 1],
		e2 = c[k3 + 2] - a[k3 + 2];
	const sd = d0 * n0 + d1 * n1 + d2 * n2,
		se = e0 * n0 + e1 * n1 + e2 * n2;
	const df0 = d0 - sd * n0,
		df1 = d1 - sd * n1,
		df2 = d2 - sd * n2;
	const ef0 = e0 - se * n0,
		ef1 = e1 - se * n1,
		ef2 = e2 - se * n2;
	const dd = df0 ** 2 + df1 ** 2 + df2 ** 2;
	const t = dd > 0 ? Math.min(1, Math.max(0, (ef0 * df0 + ef1 * df1 + ef2 * df2) / dd)) : 0;
	return Math.hypot(ef0 - t * df0, ef1 - t * df1, ef2 - t * df2);
}

/** The contact ids `<plate>#<k>` in the order given (k counts each plate's contacts by start). */
export function contactIds(contacts: readonly Contact[]): string[] {
	const byPlate = new Map<string, number[]>();
	contacts.forEach((c, i) => byPlate.set(c.plate, [...(byPlate.get(c.plate) ?? []), i]));
	const ids = new Array<string>(contacts.length);
	for (const [plate, idx] of byPlate) {
		idx.sort((a, b) => contacts[a].start - contacts[b].start);
		idx.forEach((i, k) => (ids[i] = `${plate}#${k}`));
	}
	return ids;
}

/**
 * Which foot made each contact. Over its samples start…end (inclusive), a foot is over the plate where its ankle and its
 * toe both lie over the plate's outline grown by marginM (plateContains), and it bears the load where it is over the plate
 * and, if the CoP is given and known there, the CoP lies within copMarginM of its ankle-to-toe line. The contact goes to
 * the one foot bearing it for at least FOOT_OVER_SHARE of the samples. It is shared (foot null, shared true) when, for at
 * least SHARED_SHARE of the samples, both feet are over the plate and the CoP does not single out one of them (both feet
 * or neither near it, or no CoP given): so a swinging foot passing over the plate beside the standing one does not make
 * the contact shared, two feet standing on it do. When neither foot qualifies the foot stays null for the person to choose. An
 * override sets the foot whatever the model says (assignedBy 'user'); the shared flag stays as measured.
 * Refused (ForceError) with the contact named: a plate the list lacks, an override for a contact that does not exist, a
 * foot path shorter than a contact.
 */
export function assignContacts(
	contacts: readonly Contact[],
	plates: readonly ForcePlate[],
	feet: Partial<Record<Foot, FootPath>>,
	opts: AssignOptions = {}
): AssignedContact[] {
	const margin = opts.marginM ?? DEFAULT_FOOT_MARGIN_M;
	const copMargin = opts.copMarginM ?? DEFAULT_COP_MARGIN_M;
	if (!Number.isFinite(margin)) throw new ForceError('invalid-argument', `The foot margin must be a number of metres; got ${margin}.`);
	const ids = contactIds(contacts);
	const overrides = opts.overrides ?? {};
	for (const [id, foot] of Object.entries(overrides)) {
		if (!ids.includes(id))
			throw new ForceError(
				'invalid-argument',
				`The foot set by hand for contact "${id}" names no contact of this trial (${ids.length ? ids.join(', ') : 'it has none'}).`
			);
		if (foot !== null && foot !== 'left' && foot !== 'right')
			throw new ForceError(
				'invalid-argument',
				`The foot set by hand for contact "${id}" must be "left", "right" or null; got ${JSON.stringify(foot)}.`
			);
	}
	const p = new Float64Array(3);
	return contacts.map((c, i) => {
		const plate = plates.find((pl) => pl.name === c.plate);
		if (!plate)
			throw new ForceError(
				'invalid-argument',
				`Contact ${ids[i]} is on plate "${c.plate}", which is not among the plates given (${plates.map((pl) => pl.name).join(', ')}).`
			);
		const over: Record<Foot, Uint8Array | null> = { left: null, right: null };
		const bears: Record<Foot, Uint8Array | null> = { left: null, right: null };
		const cop = opts.cop?.[c.plate];
		const nrm = plateNormal(plate);
		for (const side of ['left', 'right'] as const) {
			const path = feet[side];
			if (!path) continue;
			if (path.heel.length < 3 * (c.end + 1) || path.toe.length < 3 * (c.end + 1))
				throw new ForceError(
					'length-mismatch',
					`Contact ${ids[i]} runs to sample ${c.end + 1}; the ${side} foot's path has ${Math.floor(Math.min(path.heel.length, path.toe.length) / 3)} samples.`
				);
			const o = new Uint8Array(c.end - c.start + 1);
			for (let k = c.start; k <= c.end; k++) {
				const k3 = 3 * k;
				p[0] = path.heel[k3];
				p[1] = path.heel[k3 + 1];
				p[2] = path.heel[k3 + 2];
				if (!plateContains(plate, p, margin)) continue;
				p[0] = path.toe[k3];
				p[1] = path.toe[k3 + 1];
				p[2] = path.toe[k3 + 2];
				if (plateContains(plate, p, margin)) o[k - c.start] = 1;
			}
			over[side] = o;
			const b = o.slice();
			if (cop)
				for (let k = c.start; k <= c.end; k++)
					if (b[k - c.start] && cop[3 * k] === cop[3 * k] && distanceAcross(cop, path.heel, path.toe, 3 * k, nrm) > copMargin)
						b[k - c.start] = 0;
			bears[side] = b;
		}
		const len = c.end - c.start + 1;
		const share = (o: Uint8Array | null) => (o ? o.reduce((s, v) => s + v, 0) / len : NaN);
		let both = 0;
		if (over.left && over.right && bears.left && bears.right)
			for (let k = 0; k < len; k++) both += over.left[k] & over.right[k] & (bears.left[k] === bears.right[k] ? 1 : 0);
		const overShare = { left: share(bears.left), right: share(bears.right) };
		const bothShare = both / len;
		const shared = bothShare >= SHARED_SHARE;
		const qualifies = (['left', 'right'] as const).filter((s) => overShare[s] >= FOOT_OVER_SHARE);
		let foot: Foot | null = !shared && qualifies.length === 1 ? qualifies[0] : null;
		let assignedBy: AssignedContact['assignedBy'] = foot ? 'model' : null;
		if (ids[i] in overrides) {
			foot = overrides[ids[i]];
			assignedBy = 'user';
		}
		return { ...c, id: ids[i], foot, shared, assignedBy, overShare, bothShare };
	});
}

/**
 * From the plates' measured signals (plate axes, at forceHz) to a run's ground data at the angle rate: each plate's
 * signals filtered at cutoffHz (the run's groundCutoffHz; capped against aliasing when forceHz > angleHz) and resampled
 * (plateLoadsAtAngleRate), turned into loads on the person (plateToLab), and its contacts found (findContacts). The feet
 * are assigned by runPipeline from the filtered kinematics.
 */
export function groundFromSignals(
	plates: readonly { plate: ForcePlate; signals: PlateSignals }[],
	opts: { forceHz: number; angleHz: number; frames: number; cutoffHz: number | null; thresholdN?: number } & Omit<
		ContactOptions,
		'sampleHz' | 'thresholdN'
	>
): { plates: { plate: ForcePlate; loads: LabLoads }[]; contacts: Contact[] } {
	const out = plates.map(({ plate, signals }) => ({
		plate,
		loads: plateLoadsAtAngleRate(plate, signals, {
			forceHz: opts.forceHz,
			angleHz: opts.angleHz,
			cutoffHz: opts.cutoffHz,
			angleSamples: opts.frames,
			thresholdN: opts.thresholdN
		})
	}));
	const contacts = out.flatMap(({ plate, loads }) =>
		findContacts(plate, loads, {
			sampleHz: opts.angleHz,
			thresholdN: opts.thresholdN,
			minDurationS: opts.minDurationS,
			marginM: opts.marginM
		})
	);
	return { plates: out, contacts };
}
