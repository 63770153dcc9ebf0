// Demo sessions with their trials (seeds/recordings/*.csv, stored byte for byte; walking trials with their force files
// *.forces.csv) and one finished run per trial, computed by the same code the worker runs, so the demo shows moment
// curves, and for walking the ground reaction forces and gait cycles, at first start. Inserts only what is missing.
import { createHash } from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { QueryTypes, type Sequelize, type Transaction } from 'sequelize';
import { ForcePlate, RawUpload, Run, Session, Trial } from '../src/lib/server/db/models';
import { RAW_CHUNK_BYTES, writeRawChunk } from '../src/lib/server/trials/raw-store';
import { participantBodyOf } from '../src/lib/server/sessions/sessions';
import { softwareVersion } from '../src/lib/server/runs/runs';
import { writeResults } from '../src/lib/server/runs/process';
import { computeRun, type ForceInput } from '../src/lib/server/runs/compute';
import { buildSessionModel, sessionSetupSchema } from '../src/lib/processing/session-model';
import { forceChannelsOf, pairForceRecording, parseRecording } from '../src/lib/processing/recording';
import { runOptionsSchema } from '../src/lib/processing/pipeline';
import { DEFAULT_CONTACT_THRESHOLD_N } from '../src/lib/processing/forces';

const here = path.dirname(fileURLToPath(import.meta.url));

/** The demo visits: whose, when, by whom, and which recording (seeds/recordings/<file>.csv with <file>.setup.json). */
export const DEMO_SESSIONS = [
	{
		study: 'SHELF-REACH',
		participant: 'ALD-001',
		sessionOn: '2026-11-18',
		operator: 'Tomas Brightwater',
		task: 'Lift a 2 kg box from waist height to the overhead shelf and back, right arm',
		conditions: 'Standing, thorax upright; box held in the palm',
		recording: 'ald-001-shelf-reach',
		createdBy: 'technician@alder-creek.example'
	},
	{
		study: 'KNEE-60',
		participant: 'KNE-001',
		sessionOn: '2026-11-20',
		operator: 'Tomas Brightwater',
		task: 'Seated knee extension, right leg, twice, against a 1.5 kg ankle weight',
		conditions: 'Seated, thigh resting on the seat',
		recording: 'kne-001-seated-knee-extension',
		createdBy: 'knee.researcher@alder-creek.example'
	}
] as const;

const speeds = ['slow', 'comfortable', 'fast'] as const;
/**
 * The walking visits (WALK-3): three trials each, slow, comfortable and fast, each <file>.csv with its force file
 * <file>.forces.csv for the lab's plates. In these trials the right foot lands on plate1 and the left on plate2 (the
 * simulation's plated steps, seeds/recordings/*.torques.csv); the foot of each contact is set in the run's options
 * as the person reviewing would (see seedTrialAndRun).
 */
export const DEMO_WALKING_SESSIONS = (['WLK-001', 'WLK-002'] as const).map((participant, i) => ({
	study: 'WALK-3',
	participant,
	sessionOn: ['2026-11-24', '2026-11-26'][i],
	operator: 'Jonah Abernethy',
	task: 'Level walking along the walkway over both force plates: slow, comfortable and fast, one trial each',
	conditions: 'Barefoot; comfortable speed self-chosen, slow and fast as asked',
	recordings: speeds.map((speed) => `${participant.toLowerCase()}-walk-${speed}`),
	createdBy: 'technician@alder-creek.example'
}));

interface DemoSession {
	study: string;
	participant: string;
	sessionOn: string;
	operator: string;
	task: string;
	conditions: string;
	/** seeds/recordings/<file>.csv, in the order of the session's trials; the session's set-up is the first one's <file>.setup.json */
	recordings: readonly string[];
	createdBy: string;
}

const demoSessions = (): DemoSession[] => [...DEMO_SESSIONS.map((d) => ({ ...d, recordings: [d.recording] })), ...DEMO_WALKING_SESSIONS];

/** Seeds each demo session, its trials and a done run per trial; returns what it created. */
export async function seedSessionsAndRuns(sequelize: Sequelize, transaction: Transaction): Promise<string[]> {
	const created: string[] = [];
	const one = async <T extends object>(sql: string, replacements: Record<string, unknown>) =>
		(await sequelize.query<T>(sql, { replacements, type: QueryTypes.SELECT, transaction }))[0] ?? null;
	const read = (file: string) => {
		const full = path.join(here, 'recordings', file);
		if (!fs.existsSync(full)) throw new Error(`seeds/recordings/${file} is missing: run \`npm run demo:recordings\``);
		const bytes = fs.readFileSync(full);
		return { bytes, sha256: createHash('sha256').update(bytes).digest('hex') };
	};
	for (const demo of demoSessions()) {
		const p = await one<{ id: string; study_id: string }>(
			`SELECT p.id, p.study_id FROM participants p JOIN studies s ON s.id = p.study_id WHERE p.code = :code AND s.code = :study`,
			{ code: demo.participant, study: demo.study }
		);
		if (!p) throw new Error(`demo session: no participant ${demo.participant} in ${demo.study}`);
		// the whole session is seeded in this transaction: its first trial there means the session is there
		if (
			await one(`SELECT 1 FROM trials t JOIN sessions s ON s.id = t.session_id WHERE s.participant_id = :pid AND t.sha256 = :sha256`, {
				pid: p.id,
				sha256: read(`${demo.recordings[0]}.csv`).sha256
			})
		)
			continue;
		const user = await one<{ id: string }>(`SELECT id FROM users WHERE email = :email`, { email: demo.createdBy });
		const setup = sessionSetupSchema.parse(
			JSON.parse(fs.readFileSync(path.join(here, 'recordings', `${demo.recordings[0]}.setup.json`), 'utf8'))
		);
		const body = await participantBodyOf(p.id, transaction);
		const built = buildSessionModel(body, setup);
		const session = await Session.create(
			{
				studyId: p.study_id,
				participantId: p.id,
				sessionOn: demo.sessionOn,
				operator: demo.operator,
				task: demo.task,
				conditions: demo.conditions,
				setup,
				createdBy: user?.id ?? null
			},
			{ transaction }
		);
		const store = async (fileName: string, bytes: Buffer, sha256: string) => {
			const upload = await RawUpload.create(
				{ sha256, byteSize: bytes.length, fileName, contentType: 'text/csv', uploadedBy: user?.id ?? null },
				{ transaction }
			);
			for (let seq = 0; seq * RAW_CHUNK_BYTES < bytes.length; seq++) {
				await writeRawChunk(upload.id, seq, bytes.subarray(seq * RAW_CHUNK_BYTES, (seq + 1) * RAW_CHUNK_BYTES), transaction);
			}
			return upload.id;
		};
		for (const recording of demo.recordings) {
			const fileName = `${recording}.csv`;
			const { bytes, sha256 } = read(fileName);
			const uploadId = await store(fileName, bytes, sha256);
			const parsed = await parseRecording(new Uint8Array(bytes), { fileName, expected: built.expected });
			if (!parsed.ok) throw new Error(`seeds/recordings/${fileName}: ${parsed.problems.map((x) => x.message).join('; ')}`);
			const rec = parsed.recording;
			// a walking trial's force file, checked and paired as an upload would be, for the lab's plates it names
			const forceName = `${recording}.forces.csv`;
			let force: ForceInput | null = null;
			let forceFields = {};
			if (fs.existsSync(path.join(here, 'recordings', forceName))) {
				const f = read(forceName);
				const rows = await ForcePlate.findAll({ where: { archivedAt: null }, order: [['name', 'ASC']], transaction });
				const header = f.bytes.subarray(0, f.bytes.indexOf(10)).toString('utf8').split(',');
				const plates = rows.map((r) => r.plate).filter((pl) => header.some((c) => c.startsWith(`${pl.name}.`)));
				const fp = await parseRecording(new Uint8Array(f.bytes), {
					fileName: forceName,
					expected: forceChannelsOf(plates, { thresholdN: DEFAULT_CONTACT_THRESHOLD_N })
				});
				if (!fp.ok) throw new Error(`seeds/recordings/${forceName}: ${fp.problems.map((x) => x.message).join('; ')}`);
				const paired = pairForceRecording(rec, fp.recording, { angle: fileName, force: forceName });
				if (!paired.ok) throw new Error(`seeds/recordings/${forceName}: ${paired.problems.map((x) => x.message).join('; ')}`);
				const { pairing } = paired;
				force = { fileName: forceName, forceHz: pairing.forceHz, ratio: pairing.ratio, plates, recording: pairing.force };
				forceFields = {
					forceRawUploadId: await store(forceName, f.bytes, f.sha256),
					forceFileName: forceName,
					forceSha256: f.sha256,
					forceSampleHz: pairing.forceHz,
					forcePlates: plates.map((pl) => pl.name),
					forceMapping: null
				};
			}
			const trial = await Trial.create(
				{
					sessionId: session.id,
					rawUploadId: uploadId,
					fileName,
					sha256,
					mapping: null,
					sampleHz: rec.sampleHz,
					frameCount: rec.time.length,
					durationS: rec.time[rec.time.length - 1] - rec.time[0],
					channels: rec.channels.map((c) => c.name),
					warnings: rec.warnings,
					createdBy: user?.id ?? null,
					...forceFields
				},
				{ transaction }
			);
			// walking trials take the default options too: the model assigns each contact to the foot under the CoP
			const options = runOptionsSchema.parse({});
			const run = await Run.create(
				{
					trialId: trial.id,
					state: 'running',
					attempts: 1,
					options,
					rawSha256: sha256,
					softwareVersion: softwareVersion(),
					createdBy: user?.id ?? null,
					startedAt: new Date()
				},
				{ transaction }
			);
			await writeResults(run.id, computeRun(body, setup, rec, options, undefined, force), transaction);
			created.push(`session, trial and run of ${demo.participant} (${recording})`);
		}
	}
	return created;
}
