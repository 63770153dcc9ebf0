// Our column layout: channel names <side>.<joint>.<motion> and <side>.<limb>.base.<axis>, their kinds, and the
// usual range of motion of each DOF (used by the range check in checks.ts).

/**
 * Usual ranges of motion per DOF (°), in our sign rules (positive = flexion, abduction/adduction as
 * named, internal rotation, dorsiflexion, inversion, pronation, ulnar deviation; negative = the opposite motion).
 * Common practice, from memory: typical clinical range-of-motion references (normal values as tabulated in
 * goniometry handbooks and orthopaedic society tables). Values outside [min − margin, max + margin] give a
 * warning, never a rejection: athletes, patients and marker errors all produce them, and a person judges.
 */
export const PHYSIOLOGICAL_RANGES: Record<string, { min: number; max: number }> = {
	'hip.flexion': { min: -30, max: 125 },
	'hip.adduction': { min: -45, max: 30 },
	'hip.internalRotation': { min: -50, max: 45 },
	'knee.flexion': { min: -10, max: 150 },
	'ankle.dorsiflexion': { min: -50, max: 25 },
	'ankle.inversion': { min: -20, max: 35 },
	'shoulder.flexion': { min: -60, max: 180 },
	'shoulder.abduction': { min: -30, max: 180 },
	'shoulder.internalRotation': { min: -90, max: 70 },
	'elbow.flexion': { min: -10, max: 150 },
	// Our zero is the anatomical posture (palm forward, i.e. supinated), while clinics measure ±80° about
	// thumb-up; the range covers both zeros.
	'forearm.pronation': { min: -90, max: 170 },
	'wrist.flexion': { min: -70, max: 80 },
	'wrist.ulnarDeviation': { min: -20, max: 35 }
};

export const DOF_RE = /^(right|left)\.(hip|knee|ankle|shoulder|elbow|forearm|wrist)\.([A-Za-z]+)$/;
export const BASE_RE = /^(right|left)\.(arm|leg)\.base\.(px|py|pz|rx|ry|rz)$/;
/** The pelvis both legs hang from (a gait set-up): position of the hip joint centres' midpoint (m, lab axes) and Cardan X-Y-Z angles. */
export const PELVIS_RE = /^pelvis\.(px|py|pz|rx|ry|rz)$/;

/** The usual range (°) of a DOF channel of our layout ("right.knee.flexion" → knee.flexion's), or undefined. */
export function usualRange(name: string): { min: number; max: number } | undefined {
	const m = DOF_RE.exec(name);
	return m ? PHYSIOLOGICAL_RANGES[`${m[2]}.${m[3]}`] : undefined;
}

/**
 * Force-plate channels, all in the plate's own axes: `<plate>.force.x|y|z` (N), `<plate>.moment.x|y|z` (N·m, about
 * the measuring origin), `<plate>.cop.x|y|z` (m) and `<plate>.freemoment` (N·m), where `<plate>` is the plate's name
 * (ForcePlate.name, e.g. plate1; its pattern is PLATE_NAME_PATTERN of forces/plate.ts). Case-sensitive. Groups: 1 plate, 2 quantity (force, moment, cop, freemoment), 3 axis or undefined.
 */
export const PLATE_CHANNEL_RE = /^([A-Za-z][A-Za-z0-9_-]{0,31})\.(?:(force|moment|cop)\.([xyz])|(freemoment))$/;

/** The parts of a force-plate channel name, or undefined when the name is not one. */
export function plateChannelParts(
	name: string
): { plate: string; quantity: 'force' | 'moment' | 'cop' | 'freemoment'; axis?: 'x' | 'y' | 'z' } | undefined {
	const m = PLATE_CHANNEL_RE.exec(name);
	if (!m) return undefined;
	return m[4]
		? { plate: m[1], quantity: 'freemoment' }
		: { plate: m[1], quantity: m[2] as 'force' | 'moment' | 'cop', axis: m[3] as 'x' | 'y' | 'z' };
}

/** Whether a name belongs to our column scheme (a known DOF, a base column or a plate channel), whatever the session expects. */
export function isSchemeName(name: string): boolean {
	return usualRange(name) !== undefined || BASE_RE.test(name) || PELVIS_RE.test(name) || plateChannelParts(name) !== undefined;
}

/**
 * The channel kind our scheme gives a name: base px/py/pz are positions; a plate's force a force, its moments and
 * free moment moments, its CoP a length; everything else an angle.
 */
export function schemeKind(name: string): 'angle' | 'position' | 'force' | 'moment' | 'length' {
	const plate = plateChannelParts(name);
	if (plate) return plate.quantity === 'force' ? 'force' : plate.quantity === 'cop' ? 'length' : 'moment';
	return /(\.base|^pelvis)\.p[xyz]$/.test(name) ? 'position' : 'angle';
}
