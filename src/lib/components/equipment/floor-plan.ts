// Geometry of the top view of the lab floor with its force plates: lab X (anterior) across the page to the right, lab Z
// (right) down the page, seen from above (Y up, towards the reader: X × Y = Z holds on the page). Metres are fitted to
// a viewBox; each plate is its outline, its name at the centre and its x and y axes as arrows (z as a mark when it is
// vertical).
import { plateCentre, plateOutline, type ForcePlate } from '../../processing/forces/plate';

export const FLOOR = { width: 720, maxHeight: 420, margin: 44, minSpanM: 1.5, padM: 0.3 } as const;

export interface DrawnArrow {
	label: 'x' | 'y';
	x1: number;
	y1: number;
	x2: number;
	y2: number;
}

export interface DrawnPlate {
	name: string;
	/** SVG polygon points. */
	points: string;
	cx: number;
	cy: number;
	arrows: DrawnArrow[];
	/** The plate z axis seen from above: into the floor (down), out of it (up), or null when it lies in the view. */
	zMark: 'down' | 'up' | null;
}

export interface FloorPlan {
	width: number;
	height: number;
	/** viewBox units per metre. */
	scale: number;
	/** The lab origin on the page. */
	origin: { x: number; y: number };
	/** Grid lines: lab X (vertical lines) and Z (horizontal lines) in metres, with their page positions. */
	gridX: { m: number; at: number }[];
	gridZ: { m: number; at: number }[];
	/** Grid step in metres. */
	step: number;
	plates: DrawnPlate[];
}

const GRID_STEPS = [0.25, 0.5, 1, 2, 5];

/** Lays out the floor: the origin and every plate's outline fit, with a margin, in the viewBox. */
export function floorPlan(plates: readonly ForcePlate[]): FloorPlan {
	const xs = [0, ...plates.flatMap((p) => p.corners.map((c) => c[0]))];
	const zs = [0, ...plates.flatMap((p) => p.corners.map((c) => c[2]))];
	let [x0, x1] = [Math.min(...xs) - FLOOR.padM, Math.max(...xs) + FLOOR.padM];
	let [z0, z1] = [Math.min(...zs) - FLOOR.padM, Math.max(...zs) + FLOOR.padM];
	// a small floor is drawn at least minSpanM wide and deep, centred on what is there
	if (x1 - x0 < FLOOR.minSpanM) [x0, x1] = [(x0 + x1 - FLOOR.minSpanM) / 2, (x0 + x1 + FLOOR.minSpanM) / 2];
	if (z1 - z0 < FLOOR.minSpanM) [z0, z1] = [(z0 + z1 - FLOOR.minSpanM) / 2, (z0 + z1 + FLOOR.minSpanM) / 2];
	const inner = FLOOR.width - 2 * FLOOR.margin;
	const scale = Math.min(inner / (x1 - x0), (FLOOR.maxHeight - 2 * FLOOR.margin) / (z1 - z0));
	const width = FLOOR.width;
	const height = Math.round((z1 - z0) * scale + 2 * FLOOR.margin);
	// centre the drawing across the page when the depth limited the scale
	const left = FLOOR.margin + (inner - (x1 - x0) * scale) / 2;
	const px = (x: number) => left + (x - x0) * scale;
	const pz = (z: number) => FLOOR.margin + (z - z0) * scale;

	const step = GRID_STEPS.find((s) => Math.max(x1 - x0, z1 - z0) / s <= 12) ?? 10;
	const ticks = (a: number, b: number, at: (m: number) => number) => {
		const out: { m: number; at: number }[] = [];
		for (let k = Math.ceil(a / step); k * step <= b + 1e-9; k++) out.push({ m: Number((k * step).toFixed(3)), at: at(k * step) });
		return out;
	};

	return {
		width,
		height,
		scale,
		origin: { x: px(0), y: pz(0) },
		gridX: ticks(x0, x1, px),
		gridZ: ticks(z0, z1, pz),
		step,
		plates: plates.map((p) => {
			const outline = plateOutline(p);
			const [cx, , cz] = plateCentre(p);
			// arrows a third of the plate's shorter side long, from its centre
			const sides = [0, 1].map((i) => Math.hypot(outline[i + 1].x - outline[i].x, outline[i + 1].z - outline[i].z));
			const length = Math.max(0.05, Math.min(...sides) / 3);
			const arrows: DrawnArrow[] = [];
			(['x', 'y'] as const).forEach((label, k) => {
				const dx = p.axes[0][k],
					dz = p.axes[2][k];
				const flat = Math.hypot(dx, dz);
				if (flat < 0.2) return; // (nearly) vertical: not an arrow in a top view
				arrows.push({ label, x1: px(cx), y1: pz(cz), x2: px(cx + (dx / flat) * length), y2: pz(cz + (dz / flat) * length) });
			});
			const zUp = p.axes[1][2];
			return {
				name: p.name,
				points: outline.map((c) => `${px(c.x).toFixed(1)},${pz(c.z).toFixed(1)}`).join(' '),
				cx: px(cx),
				cy: pz(cz),
				arrows,
				zMark: zUp < -0.9 ? 'down' : zUp > 0.9 ? 'up' : null
			};
		})
	};
}
