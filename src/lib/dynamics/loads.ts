// External loads reduced, once per frame, to a force and a torque at each body's joint point in body axes.
import type { Model } from './model';
import { worldOrigins } from './kinematics';
import { addCross3, addScaled3, mulT3 } from './vec';
import type { ExternalLoad, Workspace } from './workspace';

/**
 * Fills ws.loadF / ws.loadT; needs ws.Rw (world rotations) when a load is given in ground axes, and ws.rp (the
 * joint transforms of this frame) when a load's point is given in ground coordinates (pointFrame 'world').
 */
export function reduceLoads(m: Model, ws: Workspace, loads: readonly ExternalLoad[]): void {
	const { loadF, loadT, Rw, pw } = ws;
	const v = ws.tmp; // force at 0, torque at 3, point at 6, scratch at 9
	loadF.fill(0);
	loadT.fill(0);
	let origins = false;
	for (const L of loads) {
		const b3 = 3 * L.body;
		// index access, not destructuring: this runs once per frame and must not allocate
		for (let k = 0; k < 3; k++) {
			v[k] = L.force[k];
			v[3 + k] = L.torque ? L.torque[k] : 0;
		}
		if (L.pointFrame === 'world') {
			if (!origins) {
				worldOrigins(m, ws);
				origins = true;
			}
			// the body's point at this lab position: Rwᵀ (p − origin)
			for (let k = 0; k < 3; k++) v[9 + k] = L.point[k] - pw[b3 + k];
			mulT3(Rw, 9 * L.body, v, 9, v, 6);
		} else for (let k = 0; k < 3; k++) v[6 + k] = L.point[k];
		if ((L.frame ?? 'world') === 'world') {
			mulT3(Rw, 9 * L.body, v, 0, v, 0);
			mulT3(Rw, 9 * L.body, v, 3, v, 3);
		}
		addScaled3(1, v, 0, loadF, b3);
		addScaled3(1, v, 3, loadT, b3);
		addCross3(1, v, 6, v, 0, loadT, b3); // + p × F: the force moved to the joint point
	}
}
