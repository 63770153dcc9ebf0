// `npm run demo:recordings`: writes the demo trials (forward-simulated, so their joint moments are known) to seeds/recordings.
import { mkdirSync, readFileSync, writeFileSync } from 'node:fs';
import { dirname, join, resolve } from 'node:path';
import { fileURLToPath } from 'node:url';
import { kneeExtensionSpec, shelfReachSpec, type DemoParticipantsFile } from '../lib/processing/demo-recordings';
import { recordingCsv, simulateRecording, torquesCsv } from '../lib/processing/simulate-recording';

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
