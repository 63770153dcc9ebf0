// The demo scenario's two simulated trials (a box lifted to a shelf; a seated knee extension with an ankle weight) as recording specs.
import type { ParticipantBody } from '../anthropometry/scale';
import type { SegmentTableId } from '../anthropometry/tables';
import { buildSessionModel } from './session-model';
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

/** ALD-001 lifts a 2 kg box from waist height to an overhead shelf and back, right arm, thorax upright. */
export function shelfReachSpec(file: DemoParticipantsFile): RecordingSpec {
	const { body, table } = demoParticipant(file, 'SHELF-REACH', 'ALD-001');
	const limbs = ['right.arm' as const];
	// the box is held at the hand's centre of mass (grip in the palm)
	const hand = buildSessionModel(body, { table, limbs }).model.bodies.find((b) => b.name === 'right.hand')!;
	const setup = {
		table,
		limbs,
		bases: { 'right.arm': { kind: 'fixed' as const, orientation: 'upright' as const } },
		loads: [
			{
				limb: 'right.arm' as const,
				segment: 'hand' as const,
				massKg: 2,
				pointM: hand.com.map((v) => Number(v.toFixed(4))) as [number, number, number],
				label: 'box'
			}
		],
		gravity: [0, -9.81, 0] as [number, number, number]
	};
	return {
		name: 'ald-001-shelf-reach',
		body,
		setup,
		sampleHz: 200,
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
	};
}

/** KNE-001, seated with the thigh on the seat, extends the right knee twice against a 1.5 kg ankle weight. */
export function kneeExtensionSpec(file: DemoParticipantsFile): RecordingSpec {
	const { body, table } = demoParticipant(file, 'KNEE-60', 'KNE-001');
	const limbs = ['right.leg' as const];
	// the cuff sits 5 cm above the ankle joint centre (the ankle link's anchor, at the shank's distal end)
	const ankle = buildSessionModel(body, { table, limbs }).model.bodies.find((b) => b.name === 'right.ankle.dorsiflexion')!;
	const shankLength = -ankle.anchor[1];
	const setup = {
		table,
		limbs,
		bases: { 'right.leg': { kind: 'fixed' as const, orientation: 'thigh-on-seat' as const } },
		loads: [
			{
				limb: 'right.leg' as const,
				segment: 'shank' as const,
				massKg: 1.5,
				pointM: [0, -Number((shankLength - 0.05).toFixed(4)), 0] as [number, number, number],
				label: 'ankle weight'
			}
		],
		gravity: [0, -9.81, 0] as [number, number, number]
	};
	return {
		name: 'kne-001-seated-knee-extension',
		body,
		setup,
		sampleHz: 200,
		duration: 9.5,
		targets: {
			'right.hip.flexion': path([0.5, 0], [2.0, 4], [3.0, 4], [4.5, 0], [5.0, 0], [6.5, 4], [7.5, 4], [9.0, 0]),
			'right.knee.flexion': path([0.5, 90], [2.0, 5], [3.0, 5], [4.5, 90], [5.0, 90], [6.5, 8], [7.5, 8], [9.0, 90]),
			'right.ankle.dorsiflexion': path([0.5, 0], [2.0, -15], [3.0, -15], [4.5, 0], [5.0, 0], [6.5, -12], [7.5, -12], [9.0, 0]),
			'right.ankle.inversion': path([0.5, 0], [2.0, 5], [3.0, 5], [4.5, 0])
		}
	};
}
