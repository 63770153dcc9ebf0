// What the force-plate pages and services hand out: one definition for both sides (no server imports here).
import type { ForcePlate, Mat3, PlateOutput, Vec3 } from '../processing/forces/plate';

export type { ForcePlate, PlateOutput };

/** One plate of the lab as stored: the pure ForcePlate plus its record's id and times (ISO 8601 strings). */
export interface PlateView extends ForcePlate {
	id: string;
	createdAt: string;
	updatedAt: string;
	/** When it went out of use (runs that used it keep pointing at it); null while in use. */
	archivedAt: string | null;
	/** Which common orientation its axes are, or 'custom'. */
	orientation: PlateOrientationId | 'custom';
	/** Centre of the top surface in lab axes (m). */
	centre: Vec3;
}

/** The lab's plates: those in use (by name) and the archived ones (newest first). */
export interface PlateList {
	plates: PlateView[];
	archived: PlateView[];
	/** Whether the reader may set up, change and archive plates (lab administrators). */
	canManage: boolean;
}

/** The words the UI uses for each output kind. */
export const PLATE_OUTPUT_LABELS: Record<PlateOutput, string> = {
	'forces-moments': 'three forces and three moments about the measuring origin',
	'forces-cop': 'three forces, centre of pressure and free moment'
};

/**
 * The usual ways a plate lies in a level floor, as R_plate→lab (row-major; column k = plate axis k in lab axes).
 * Lab axes: X anterior, Y up, Z right. The plate's z axis points INTO the plate (down: lab −Y) and x × y = z, so
 * the four differ only by the turn of the plate's x axis about the vertical.
 */
export const PLATE_ORIENTATIONS = [
	{
		id: 'x-anterior',
		label: 'plate x = lab X (anterior), plate y = lab Z (right), plate z down',
		axes: m([1, 0, 0], [0, 0, -1], [0, 1, 0])
	},
	{
		id: 'x-right',
		label: 'plate x = lab Z (right), plate y = lab −X (posterior), plate z down',
		axes: m([0, -1, 0], [0, 0, -1], [1, 0, 0])
	},
	{
		id: 'x-posterior',
		label: 'plate x = lab −X (posterior), plate y = lab −Z (left), plate z down',
		axes: m([-1, 0, 0], [0, 0, -1], [0, -1, 0])
	},
	{ id: 'x-left', label: 'plate x = lab −Z (left), plate y = lab X (anterior), plate z down', axes: m([0, 1, 0], [0, 0, -1], [-1, 0, 0]) }
] as const satisfies readonly { id: string; label: string; axes: Mat3 }[];
export type PlateOrientationId = (typeof PLATE_ORIENTATIONS)[number]['id'];

function m(r0: Vec3, r1: Vec3, r2: Vec3): Mat3 {
	return [r0, r1, r2];
}

/** The common orientation whose axes these are (exactly, as entered), or 'custom'. */
export function orientationOf(axes: Mat3): PlateOrientationId | 'custom' {
	const same = (a: Mat3) => a.every((row, i) => row.every((v, k) => v === axes[i][k]));
	return PLATE_ORIENTATIONS.find((o) => same(o.axes))?.id ?? 'custom';
}

/** Axis letters of the form's fields: corner fields are `corners.<0–3>.<x|y|z>`, custom axes `axes.<row>.<column>`. */
export const AXIS_LETTERS = ['x', 'y', 'z'] as const;
