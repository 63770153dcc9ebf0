// The demo scenario's two simulated trials (a box lifted to a shelf; a seated knee extension with an ankle weight) as recording specs.
import type { ModelInput, Vec3 } from '../dynamics/model';
import type { Limb, ParticipantBody } from '../anthropometry/scale';
import type { SegmentTableId } from '../anthropometry/tables';
import { buildSessionModel, type LoadSetup } from './session-model';
import type { RecordingSpec, Waypoints } from './simulate-recording';

/** The shape of seeds/demo/participants.json that the demo trials need. */
export interface DemoParticipantsFile {
	studies: Record<
		string,
		{
			defaultTable: string;
			participantPrefix: string;
			participants: { sex: string; bodyMassKg: number; statureM: number }[];
			lengths: { participant: number; segment: string; lengthM: number }[];
		}
	>;
}

/** A demo participant (code `<prefix>-NNN`, 1-based) as the body scaling needs, with the study's table. */
export function demoParticipant(file: DemoParticipantsFile, study: string, code: string): { body: ParticipantBody; table: SegmentTableId } {
	const st = file.studies[study];
	if (!st) throw new Error(`no study ${study} in the demo participants`);
	const n = Number(code.split('-')[1]);
	const p = st.participants[n - 1];
	if (!p || !code.startsWith(st.participantPrefix + '-')) throw new Error(`no participant ${code} in ${study}`);
	const measured = Object.fromEntries(st.lengths.filter((l) => l.participant === n).map((l) => [l.segment, l.lengthM]));
	const body: ParticipantBody = {
		sex: p.sex as ParticipantBody['sex'],
		bodyMass: p.bodyMassKg,
		stature: p.statureM,
		...(Object.keys(measured).length ? { measuredLengths: measured } : {}),
		...(p.sex === 'not reported' ? { notReportedAs: 'mean' as const } : {})
	};
	return { body, table: st.defaultTable as SegmentTableId };
}

const deg = Math.PI / 180;
/** Waypoints from [time s, angle deg] pairs. */
const path = (...pts: [number, number][]): Waypoints => pts.map(([t, v]) => ({ t, value: v * deg }));

/** One demo trial: a limb on a fixed base carrying one point mass, placed from the participant's scaled model. */
interface DemoTrial {
	name: string;
	study: string;
	code: string;
	limb: Limb;
	orientation: 'upright' | 'thigh-on-seat';
	load: { segment: LoadSetup['segment']; massKg: number; label: string; at: (bodies: ModelInput['bodies']) => Vec3 };
	duration: number;
	targets: RecordingSpec['targets'];
}

/** A demo trial as a recording spec: 200 Hz, gravity 9.81 m/s² down, the load's point rounded to 0.1 mm. */
function demoSpec(file: DemoParticipantsFile, trial: DemoTrial): RecordingSpec {
	const { body, table } = demoParticipant(file, trial.study, trial.code);
	const { limb, load } = trial;
	const limbs = [limb];
	const bodies = buildSessionModel(body, { table, limbs }).model.bodies;
	return {
		name: trial.name,
		body,
		setup: {
			table,
			limbs,
			bases: { [limb]: { kind: 'fixed', orientation: trial.orientation } },
			loads: [
				{
					limb,
					segment: load.segment,
					massKg: load.massKg,
					pointM: load.at(bodies).map((v) => Number(v.toFixed(4))) as Vec3,
					label: load.label
				}
			],
			gravity: [0, -9.81, 0]
		},
		sampleHz: 200,
		duration: trial.duration,
		targets: trial.targets
	};
}

const bodyNamed = (bodies: ModelInput['bodies'], name: string) => bodies.find((b) => b.name === name)!;

/** ALD-001 lifts a 2 kg box from waist height to an overhead shelf and back, right arm, thorax upright. */
export function shelfReachSpec(file: DemoParticipantsFile): RecordingSpec {
	return demoSpec(file, {
		name: 'ald-001-shelf-reach',
		study: 'SHELF-REACH',
		code: 'ALD-001',
		limb: 'right.arm',
		orientation: 'upright',
		// the box is held at the hand's centre of mass (grip in the palm)
		load: { segment: 'hand', massKg: 2, label: 'box', at: (bodies) => bodyNamed(bodies, 'right.hand').com },
		duration: 5,
		targets: {
			'right.shoulder.flexion': path([0.5, 20], [2.0, 130], [2.8, 130], [4.3, 20]),
			'right.shoulder.abduction': path([0.5, 10], [2.0, 20], [2.8, 20], [4.3, 10]),
			'right.shoulder.internalRotation': path([0.5, 10], [2.0, 0], [2.8, 0], [4.3, 10]),
			'right.elbow.flexion': path([0.5, 90], [2.0, 25], [2.8, 25], [4.3, 90]),
			'right.forearm.pronation': path([0.5, 80], [2.0, 70], [2.8, 70], [4.3, 80]),
			'right.wrist.flexion': path([0.5, 0], [2.0, -15], [2.8, -15], [4.3, 0]),
			'right.wrist.ulnarDeviation': path([0.5, 0], [2.0, 8], [2.8, 8], [4.3, 0])
		}
	});
}

/** KNE-001, seated with the thigh on the seat, extends the right knee twice against a 1.5 kg ankle weight. */
export function kneeExtensionSpec(file: DemoParticipantsFile): RecordingSpec {
	return demoSpec(file, {
		name: 'kne-001-seated-knee-extension',
		study: 'KNEE-60',
		code: 'KNE-001',
		limb: 'right.leg',
		orientation: 'thigh-on-seat',
		// the cuff sits 5 cm above the ankle joint centre (the ankle link's anchor, at the shank's distal end)
		load: {
			segment: 'shank',
			massKg: 1.5,
			label: 'ankle weight',
			at: (bodies) => [0, bodyNamed(bodies, 'right.ankle.dorsiflexion').anchor[1] + 0.05, 0]
		},
		duration: 9.5,
		targets: {
			'right.hip.flexion': path([0.5, 0], [2.0, 4], [3.0, 4], [4.5, 0], [5.0, 0], [6.5, 4], [7.5, 4], [9.0, 0]),
			'right.knee.flexion': path([0.5, 90], [2.0, 5], [3.0, 5], [4.5, 90], [5.0, 90], [6.5, 8], [7.5, 8], [9.0, 90]),
			'right.ankle.dorsiflexion': path([0.5, 0], [2.0, -15], [3.0, -15], [4.5, 0], [5.0, 0], [6.5, -12], [7.5, -12], [9.0, 0]),
			'right.ankle.inversion': path([0.5, 0], [2.0, 5], [3.0, 5], [4.5, 0])
		}
	});
}
