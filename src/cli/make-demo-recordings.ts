// `npm run demo:recordings`: writes the demo trials (forward-simulated, so their joint moments are known) to seeds/recordings.
// Walking trials (WALK-3) get a force file for the demo lab's plates beside their angles: <name>.csv and <name>.forces.csv.
import { mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { kneeExtensionSpec, shelfReachSpec, type DemoParticipantsFile } from '../lib/processing/demo-recordings';
import { recordingCsv, simulateRecording, torquesCsv } from '../lib/processing/simulate-recording';
import { demoWalkingTrial, DEMO_WALKING_SPEEDS, type DemoWalkingSpeed } from '../lib/processing/demo-walking';
import { forcePlateSchema } from '../lib/processing/forces/plate';

const root = resolve(dirname(fileURLToPath(import.meta.url)), '../..');
const participants = JSON.parse(readFileSync(join(root, 'seeds/demo/participants.json'), 'utf8')) as DemoParticipantsFile;
const outDir = join(root, 'seeds/recordings');
mkdirSync(outDir, { recursive: true });

for (const spec of [shelfReachSpec(participants), kneeExtensionSpec(participants)]) {
	const t0 = performance.now();
	const sim = simulateRecording(spec);
	const base = join(outDir, spec.name);
	writeFileSync(`${base}.csv`, recordingCsv(sim));
	writeFileSync(`${base}.torques.csv`, torquesCsv(sim));
	writeFileSync(`${base}.setup.json`, JSON.stringify(sim.built.setup, null, '\t') + '\n');
	// the participant's body as `npm run process -- --participant` reads it (the server takes it from the participant record)
	writeFileSync(`${base}.participant.json`, JSON.stringify({ ...spec.body, table: sim.built.setup.table }, null, '\t') + '\n');
	console.log(
		`${spec.name}: ${sim.time.length} frames at ${spec.sampleHz} Hz, ${sim.model.n} DOF, ${(performance.now() - t0).toFixed(0)} ms → ${base}.{csv,torques.csv,setup.json,participant.json}`
	);
}

// WALK-3: each participant walks at three speeds over the lab's plates (the plates the seed sets up)
const labPlates = (JSON.parse(readFileSync(join(root, 'seeds/demo/lab.json'), 'utf8')) as { forcePlates: unknown[] }).forcePlates.map((p) =>
	forcePlateSchema.parse(p)
);
for (const code of ['WLK-001', 'WLK-002'])
	for (const speed of Object.keys(DEMO_WALKING_SPEEDS) as DemoWalkingSpeed[]) {
		const t0 = performance.now();
		const walk = demoWalkingTrial(participants, code, speed, labPlates);
		const base = join(outDir, walk.name);
		writeFileSync(`${base}.csv`, walk.anglesCsv);
		writeFileSync(`${base}.forces.csv`, walk.forcesCsv);
		writeFileSync(`${base}.torques.csv`, walk.torquesCsv);
		writeFileSync(`${base}.setup.json`, JSON.stringify(walk.trial.sim.built.setup, null, '\t') + '\n');
		writeFileSync(
			`${base}.participant.json`,
			JSON.stringify({ ...walk.trial.spec.body, table: walk.trial.sim.built.setup.table }, null, '\t') + '\n'
		);
		console.log(
			`${walk.name}: ${walk.trial.sim.time.length} frames at ${walk.trial.angleHz} Hz, forces at ${walk.trial.forceHz} Hz, moved ${walk.shiftXM} m along X, ${(performance.now() - t0).toFixed(0)} ms → ${base}.{csv,forces.csv,torques.csv,setup.json,participant.json}`
		);
	}
