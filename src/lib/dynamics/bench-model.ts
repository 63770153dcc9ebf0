// A 26-DOF bilateral limb tree (legs: hip 3, knee 1, ankle 2; arms: shoulder 3, elbow 1, forearm 1, wrist 2)
// with adult-sized segment parameters of typical magnitude, for benchmarks and demos only (not a published table).
import type { BodyInput, ModelInput, Vec3 } from './model';

const zero = (): [Vec3, Vec3, Vec3] => [
	[0, 0, 0],
	[0, 0, 0],
	[0, 0, 0]
];
const X: Vec3 = [1, 0, 0],
	Y: Vec3 = [0, 1, 0],
	Z: Vec3 = [0, 0, 1];

function link(name: string, parent: number, axis: Vec3, anchor: Vec3): BodyInput {
	return { name, parent, joint: { type: 'revolute', axis }, anchor, mass: 0, com: [0, 0, 0], inertia: zero() };
}

/** A segment: mass, length along −Y, COM fraction from the proximal end, radii of gyration as fractions of length. */
function segment(name: string, parent: number, axis: Vec3, anchor: Vec3, mass: number, length: number, comFrac: number, k: Vec3): BodyInput {
	const [kx, ky, kz] = k.map((f) => (f * length) ** 2 * mass);
	return {
		name,
		parent,
		joint: { type: 'revolute', axis },
		anchor,
		mass,
		com: [0, -comFrac * length, 0],
		inertia: [
			[kx, 0, 0],
			[0, ky, 0],
			[0, 0, kz]
		]
	};
}

export function bilateralLimbTree(): ModelInput {
	const bodies: BodyInput[] = [];
	const add = (b: BodyInput) => bodies.push(b) - 1;
	for (const [side, s] of [['right', 1], ['left', -1]] as const) {
		// leg: hip flexion (Z), adduction (X), internal rotation (Y); knee flexion; ankle dorsiflexion, inversion
		const h1 = add(link(`${side}.hip.flexion`, -1, Z, [0, 0, 0.09 * s]));
		const h2 = add(link(`${side}.hip.adduction`, h1, X, [0, 0, 0]));
		const thigh = add(segment(`${side}.thigh`, h2, Y, [0, 0, 0], 10.6, 0.42, 0.43, [0.32, 0.16, 0.32]));
		const shank = add(segment(`${side}.shank`, thigh, Z, [0, -0.42, 0], 3.3, 0.43, 0.43, [0.3, 0.1, 0.3]));
		const a1 = add(link(`${side}.ankle.dorsiflexion`, shank, Z, [0, -0.43, 0]));
		add({ ...segment(`${side}.foot`, a1, X, [0, 0, 0], 1.0, 0.26, 0.5, [0.25, 0.25, 0.1]), com: [0.08, -0.04, 0] });
	}
	for (const [side, s] of [['right', 1], ['left', -1]] as const) {
		// arm: shoulder plane/elevation/axial rotation; elbow flexion; forearm pronation; wrist flexion, deviation
		const s1 = add(link(`${side}.shoulder.plane`, -1, Y, [0, 0.45, 0.19 * s]));
		const s2 = add(link(`${side}.shoulder.elevation`, s1, Z, [0, 0, 0]));
		const upper = add(segment(`${side}.upperarm`, s2, Y, [0, 0, 0], 2.1, 0.3, 0.44, [0.32, 0.14, 0.32]));
		const e1 = add(link(`${side}.elbow.flexion`, upper, Z, [0, -0.3, 0]));
		const fore = add(segment(`${side}.forearm`, e1, Y, [0, 0, 0], 1.2, 0.27, 0.43, [0.3, 0.12, 0.3]));
		const w1 = add(link(`${side}.wrist.flexion`, fore, Z, [0, -0.27, 0]));
		add(segment(`${side}.hand`, w1, X, [0, 0, 0], 0.45, 0.19, 0.5, [0.3, 0.2, 0.25]));
	}
	return { name: 'bilateral limb tree (benchmark)', bodies };
}
