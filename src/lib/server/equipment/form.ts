// The force-plate form as posted and as shown: a level plate's four corners as X and Z with one top-surface height
// Y (m), its axes as a common orientation or a custom 3×3, the origin depth in millimetres (stored in metres).
// Turning the form into a plate only reads numbers; the plate schema (through validatePlate) says what is wrong.
import { FormProblem } from '../errors';
import type { ForcePlate } from '../../processing/forces/plate';
import { PLATE_ORIENTATIONS } from '../../types/equipment';
import type { PlateInput } from './plates';

/** What a form posted, field by field; anything not text reads as empty. */
export type FormInput = Record<string, unknown>;

const text = (input: FormInput, field: string) => (typeof input[field] === 'string' ? (input[field] as string).trim() : '');
/** A typed number; an empty field is missing (undefined) and anything else that is no number NaN, so the schema names the field. */
function num(input: FormInput, field: string): number | undefined {
	const t = text(input, field);
	return t === '' ? undefined : Number(t);
}
/** x·1000 without binary noise in the shown figure (0.035 m → "35", not "35.00000000000001"). */
const show = (x: number) => String(Number(x.toPrecision(12)));

/** The plate a form describes, for validatePlate: numbers read, the orientation turned into its axes. */
export function plateFromForm(input: FormInput): PlateInput {
	const y = num(input, 'surfaceY');
	const corners = [0, 1, 2, 3].map((i) => [num(input, `corners.${i}.x`), y, num(input, `corners.${i}.z`)]);
	const orientation = text(input, 'orientation');
	const common = PLATE_ORIENTATIONS.find((o) => o.id === orientation);
	if (!common && orientation !== 'custom')
		throw new FormProblem({ axes: 'Choose how the plate lies from the list of orientations, or “custom axes” and type its 3×3.' });
	const axes = common ? common.axes : [0, 1, 2].map((r) => [0, 1, 2].map((c) => num(input, `axes.${r}.${c}`)));
	const depthMm = num(input, 'originDepthMm');
	return {
		name: text(input, 'name'),
		corners,
		axes,
		originDepthM: depthMm === undefined ? undefined : depthMm / 1000,
		output: text(input, 'output')
	};
}

/** The form's fields for a plate (to edit it), or for a new one. */
export function plateFormValues(plate: ForcePlate): Record<string, string> {
	const values: Record<string, string> = {
		name: plate.name,
		surfaceY: show(plate.corners[0][1]),
		originDepthMm: show(plate.originDepthM * 1000),
		output: plate.output
	};
	plate.corners.forEach((c, i) => {
		values[`corners.${i}.x`] = show(c[0]);
		values[`corners.${i}.z`] = show(c[2]);
	});
	const common = PLATE_ORIENTATIONS.find((o) => o.axes.every((row, r) => row.every((v, c) => v === plate.axes[r][c])));
	values.orientation = common?.id ?? 'custom';
	plate.axes.forEach((row, r) => row.forEach((v, c) => (values[`axes.${r}.${c}`] = show(v))));
	return values;
}

/**
 * A new plate's starting point: 0.6 m × 0.4 m, centred on the lab origin, top surface at Y = 0, plate x along lab X,
 * measuring origin at the surface (type the depth from the plate's calibration sheet). The name is the first free
 * "plateN".
 */
export function newPlate(namesInUse: readonly string[]): ForcePlate {
	let n = 1;
	while (namesInUse.includes(`plate${n}`)) n++;
	return {
		name: `plate${n}`,
		corners: [
			[-0.3, 0, -0.2],
			[0.3, 0, -0.2],
			[0.3, 0, 0.2],
			[-0.3, 0, 0.2]
		],
		axes: PLATE_ORIENTATIONS[0].axes,
		originDepthM: 0,
		output: 'forces-moments'
	};
}
