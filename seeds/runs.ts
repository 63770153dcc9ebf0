// Demo sessions with their trials (seeds/recordings/*.csv, stored byte for byte) and one finished run each, computed
// by the same code the worker runs, so the demo shows moment curves at first start. Inserts only what is missing.
import { createHash } from 'node:crypto';
import fs from 'node:fs';
import path from 'node:path';
import { fileURLToPath } from 'node:url';
import { QueryTypes, type Sequelize, type Transaction } from 'sequelize';
import { RawUpload, Run, Session, Trial } from '../src/lib/server/db/models';
import { RAW_CHUNK_BYTES, writeRawChunk } from '../src/lib/server/trials/raw-store';
import { participantBodyOf } from '../src/lib/server/sessions/sessions';
import { softwareVersion } from '../src/lib/server/runs/runs';
import { writeResults } from '../src/lib/server/runs/process';
import { computeRun } from '../src/lib/server/runs/compute';
import { buildSessionModel, sessionSetupSchema } from '../src/lib/processing/session-model';
import { parseRecording } from '../src/lib/processing/recording';
import { runOptionsSchema } from '../src/lib/processing/pipeline';

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

/** Seeds each demo session, its trial and a done run with the default options; returns what it created. */
export async function seedSessionsAndRuns(sequelize: Sequelize, transaction: Transaction): Promise<string[]> {
	const created: string[] = [];
	const one = async <T extends object>(sql: string, replacements: Record<string, unknown>) =>
		(await sequelize.query<T>(sql, { replacements, type: QueryTypes.SELECT, transaction }))[0] ?? null;
	for (const demo of DEMO_SESSIONS) {
		const file = path.join(here, 'recordings', `${demo.recording}.csv`);
		if (!fs.existsSync(file)) throw new Error(`seeds/recordings/${demo.recording}.csv is missing: run \`npm run demo:recordings\``);
		const bytes = fs.readFileSync(file);
		const sha256 = createHash('sha256').update(bytes).digest('hex');
		const p = await one<{ id: string; study_id: string }>(
			`SELECT p.id, p.study_id FROM participants p JOIN studies s ON s.id = p.study_id WHERE p.code = :code AND s.code = :study`,
			{ code: demo.participant, study: demo.study }
		);
		if (!p) throw new Error(`demo session: no participant ${demo.participant} in ${demo.study}`);
		if (
			await one(`SELECT 1 FROM trials t JOIN sessions s ON s.id = t.session_id WHERE s.participant_id = :pid AND t.sha256 = :sha256`, {
				pid: p.id,
				sha256
			})
		)
			continue;
		const user = await one<{ id: string }>(`SELECT id FROM users WHERE email = :email`, { email: demo.createdBy });
		const setup = sessionSetupSchema.parse(
			JSON.parse(fs.readFileSync(path.join(here, 'recordings', `${demo.recording}.setup.json`), 'utf8'))
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
		const fileName = `${demo.recording}.csv`;
		const upload = await RawUpload.create(
			{ sha256, byteSize: bytes.length, fileName, contentType: 'text/csv', uploadedBy: user?.id ?? null },
			{ transaction }
		);
		for (let seq = 0; seq * RAW_CHUNK_BYTES < bytes.length; seq++) {
			await writeRawChunk(upload.id, seq, bytes.subarray(seq * RAW_CHUNK_BYTES, (seq + 1) * RAW_CHUNK_BYTES), transaction);
		}
		const parsed = await parseRecording(new Uint8Array(bytes), { fileName, expected: built.expected });
		if (!parsed.ok) throw new Error(`seeds/recordings/${fileName}: ${parsed.problems.map((x) => x.message).join('; ')}`);
		const rec = parsed.recording;
		const trial = await Trial.create(
			{
				sessionId: session.id,
				rawUploadId: upload.id,
				fileName,
				sha256,
				mapping: null,
				sampleHz: rec.sampleHz,
				frameCount: rec.time.length,
				durationS: rec.time[rec.time.length - 1] - rec.time[0],
				channels: rec.channels.map((c) => c.name),
				warnings: rec.warnings,
				createdBy: user?.id ?? null
			},
			{ transaction }
		);
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
		await writeResults(run.id, computeRun(body, setup, rec, options), transaction);
		created.push(`session, trial and run of ${demo.participant} (${demo.recording})`);
	}
	return created;
}
