// The demo's walking trials (study WALK-3): level walking at three speeds over the demo lab's two force plates,
// simulated by simulateWalkingTrial, so their joint moments and ground reaction forces are known.
import { labToPlate, plateContains, type ForcePlate } from './forces/index';
import { forcesCsv, simulateWalkingTrial, type WalkingTrial } from './simulate-walking';
import { recordingCsv } from './simulate-recording';
import { demoParticipant, type DemoParticipantsFile } from './demo-recordings';

/**
 * The three speeds: speed (m/s), cycle time (s) and stance share of the cycle. Our choice for the demo, in the range
 * of healthy adults' slow, comfortable and fast level walking (from memory: comfortable speed about 1.2–1.4 m/s with a
 * cycle of about 1.0–1.1 s and stance about 60 % of it; stance shortens as speed grows).
 */
export const DEMO_WALKING_SPEEDS = {
	slow: { speedMS: 0.9, cycleS: 1.25, stanceShare: 0.63 },
	comfortable: { speedMS: 1.25, cycleS: 1.08, stanceShare: 0.61 },
	fast: { speedMS: 1.6, cycleS: 0.95, stanceShare: 0.58 }
} as const;
export type DemoWalkingSpeed = keyof typeof DEMO_WALKING_SPEEDS;

/** Where the first plated heel lands on plate1 (lab X, m): 12 cm past its near edge (X 1.0 m in the demo lab). */
const FIRST_CONTACT_X = 1.12;
/** A CoP must stay this far inside its plate (m): well within the contacts' off-plate margin. */
const INSIDE_M = 0.02;

export interface DemoWalkingTrial {
	/** file stem, e.g. `wlk-001-walk-comfortable` */
	name: string;
	code: string;
	speed: DemoWalkingSpeed;
	trial: WalkingTrial;
	/** the whole trial moved this far along lab X (m) so the plated steps land on the demo lab's plates */
	shiftXM: number;
	/** angles (pelvis.* and both legs), force file (the demo plates, our column scheme), known joint moments */
	anglesCsv: string;
	forcesCsv: string;
	torquesCsv: string;
}

/**
 * One demo walking trial of participant `code` (WALK-3) at a speed, with the demo lab's plates (seeds/demo/lab.json:
 * plate1 then plate2 along the walkway). The simulation puts its right step 1 and left step 1 on plates of its own;
 * level walking is the same anywhere along the walkway (gravity is along Y), so the whole trial is moved along X until
 * those two stances land on plate1 and plate2, and the plates' signals are written for the lab's plates (labToPlate of
 * the known GRF, CoP and free moment). The known joint moments do not change with the move.
 */
export function demoWalkingTrial(
	file: DemoParticipantsFile,
	code: string,
	speed: DemoWalkingSpeed,
	labPlates: ForcePlate[]
): DemoWalkingTrial {
	const { body, table } = demoParticipant(file, 'WALK-3', code);
	const s = DEMO_WALKING_SPEEDS[speed];
	const name = `${code.toLowerCase()}-walk-${speed}`;
	// three cycles after the first strike at 0.3 s, and a little more: the run's edge zone takes some of each end
	const duration = Number((0.6 + 3 * s.cycleS).toFixed(2));
	const trial = simulateWalkingTrial({ name, body, table, ...s, duration, angleHz: 200, forceRatio: 5 });
	if (labPlates.length < trial.lab.length)
		throw new Error(`the demo walk needs ${trial.lab.length} force plates, the lab has ${labPlates.length}`);
	const firstCopX = (cop: Float64Array) => {
		for (let k = 0; k < cop.length; k += 3) if (!Number.isNaN(cop[k])) return cop[k];
		throw new Error(`${name}: a plated stance carries no force`);
	};
	const shiftXM = Number((FIRST_CONTACT_X - firstCopX(trial.lab[0].cop)).toFixed(4));
	const lab = trial.lab.map((l, i) => {
		const plate = labPlates[i];
		const cop = Float64Array.from(l.cop, (v, k) => (k % 3 === 0 ? v + shiftXM : v));
		for (let k = 0; k < cop.length; k += 3) {
			if (Number.isNaN(cop[k])) continue;
			if (!plateContains(plate, [cop[k], cop[k + 1], cop[k + 2]], -INSIDE_M))
				throw new Error(
					`${name}: the CoP at X ${cop[k].toFixed(3)} m, Z ${cop[k + 2].toFixed(3)} m leaves ${plate.name}; change FIRST_CONTACT_X or the speeds`
				);
		}
		return { plate, loads: { grf: l.grf, cop, freeMoment: l.freeMoment } };
	});
	const signals = lab.map(({ plate, loads }) => ({ plate, signals: labToPlate(plate, loads) }));
	// the pelvis path moves with the trial; every other coordinate is relative to it
	const { sim } = trial;
	const n = sim.built.dofs.length;
	const px = sim.built.dofs.findIndex((d) => d.name === 'pelvis.px');
	if (px < 0) throw new Error(`${name}: the gait model has no pelvis.px`);
	const q = Float64Array.from(sim.q);
	for (let k = px; k < q.length; k += n) q[k] += shiftXM;
	return {
		name,
		code,
		speed,
		trial,
		shiftXM,
		anglesCsv: recordingCsv({ ...sim, q }),
		forcesCsv: forcesCsv(trial.forceTime, signals, 4),
		torquesCsv: trial.torquesCsv
	};
}
