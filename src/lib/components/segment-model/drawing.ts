// Geometry of the segment-tree drawing: joint centres, segment lines and centres of mass at q = 0, projected and fitted to a viewBox.
import type { ScaledModel } from '../../anthropometry';
import { compileModel, forwardKinematics } from '../../dynamics';

export type View = 'front' | 'side';
type P3 = [number, number, number];

export interface DrawnJoint {
	/** e.g. right.knee */
	name: string;
	x: number;
	y: number;
}
export interface DrawnSegment {
	key: string;
	x1: number;
	y1: number;
	x2: number;
	y2: number;
}
export interface DrawnCom {
	key: string;
	x: number;
	y: number;
}
export interface Drawing {
	width: number;
	height: number;
	/** Drawing area inside the margins, in viewBox units. */
	area: { left: number; top: number; right: number; bottom: number };
	/** viewBox units per metre. */
	scale: number;
	joints: DrawnJoint[];
	segments: DrawnSegment[];
	coms: DrawnCom[];
	/** Scale bar length in metres and in viewBox units. */
	bar: { metres: number; length: number };
}

export const LAYOUT = { width: 360, height: 470, margin: { left: 40, right: 40, top: 24, bottom: 110 } } as const;
const BAR_CHOICES = [0.01, 0.02, 0.05, 0.1, 0.2, 0.25, 0.5, 1, 2];

/** Screen coordinates in metres before scaling: front view Z right → x, side view X anterior → x; Y up. */
function project(p: P3, view: View): [number, number] {
	return [view === 'front' ? p[2] : p[0], p[1]];
}

export function layoutDrawing(scaled: ScaledModel, view: View): Drawing {
	const model = compileModel(scaled.model);
	const pose = forwardKinematics(model, new Float64Array(model.n));
	const at = (arr: Float64Array, i: number): P3 => [arr[3 * i], arr[3 * i + 1], arr[3 * i + 2]];
	const bodies = scaled.model.bodies;

	const joints = new Map<string, P3>();
	const lines: { key: string; a: P3; b: P3 }[] = [];
	const coms: { key: string; p: P3 }[] = [];
	// A joint centre is named after the first body of its chain of coincident one-DOF joints (the forearm's
	// pronation joint sits at the elbow, so its centre is the elbow).
	const jointName = (i: number) => {
		let j = i;
		while (bodies[j].parent >= 0 && bodies[j].anchor.every((v) => v === 0)) j = bodies[j].parent;
		return `${scaled.dofs[j].side}.${scaled.dofs[j].joint}`;
	};

	for (const s of scaled.segments) {
		const i = bodies.findIndex((b) => b.name === s.key);
		if (i < 0) continue;
		const a = at(pose.jointCentre, i);
		const c = at(pose.com, i);
		joints.set(jointName(i), a);
		const child = bodies.findIndex((b) => b.parent === i);
		let b: P3;
		if (child >= 0) {
			b = at(pose.jointCentre, child);
			joints.set(jointName(child), b);
		} else {
			// An end segment (hand, foot): from the joint centre through the COM, out to the segment's length.
			const d: P3 = [c[0] - a[0], c[1] - a[1], c[2] - a[2]];
			const n = Math.hypot(...d) || 1;
			const L = s.length.value;
			b = [a[0] + (d[0] / n) * L, a[1] + (d[1] / n) * L, a[2] + (d[2] / n) * L];
		}
		lines.push({ key: s.key, a, b });
		coms.push({ key: s.key, p: c });
	}

	const pts = [...joints.values(), ...lines.map((l) => l.b), ...coms.map((c) => c.p)].map((p) => project(p, view));
	const xs = pts.map((p) => p[0]),
		ys = pts.map((p) => p[1]);
	const minX = Math.min(...xs),
		maxX = Math.max(...xs),
		minY = Math.min(...ys),
		maxY = Math.max(...ys);
	const { width, height, margin } = LAYOUT;
	const area = { left: margin.left, top: margin.top, right: width - margin.right, bottom: height - margin.bottom };
	const aw = area.right - area.left,
		ah = area.bottom - area.top;
	const spanX = Math.max(maxX - minX, 0.1),
		spanY = Math.max(maxY - minY, 0.1);
	const scale = Math.min(aw / spanX, ah / spanY);
	// Centre the content in the drawing area.
	const cx = (minX + maxX) / 2,
		cy = (minY + maxY) / 2;
	const sx = (x: number) => area.left + aw / 2 + (x - cx) * scale;
	const sy = (y: number) => area.top + ah / 2 - (y - cy) * scale;
	const place = (p: P3) => {
		const [x, y] = project(p, view);
		return { x: sx(x), y: sy(y) };
	};

	const metres = [...BAR_CHOICES].reverse().find((m) => m * scale <= 0.45 * aw) ?? BAR_CHOICES[0];
	return {
		width,
		height,
		area,
		scale,
		joints: [...joints].map(([name, p]) => ({ name, ...place(p) })),
		segments: lines.map((l) => {
			const a = place(l.a),
				b = place(l.b);
			return { key: l.key, x1: a.x, y1: a.y, x2: b.x, y2: b.y };
		}),
		coms: coms.map((c) => ({ key: c.key, ...place(c.p) })),
		bar: { metres, length: metres * scale }
	};
}
