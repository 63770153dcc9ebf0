// Sessions (one visit), raw uploads kept byte for byte, trials (one uploaded file), column-mapping presets,
// processing runs and their result series. Raw data is never lost: everything on the path from a session
// to its raw bytes refuses deletion (ON DELETE RESTRICT); only derived series go with their run.
import { DataTypes } from 'sequelize';
import type { Migration } from './types';

export const up: Migration = async ({ context: qi }) => {
	const now = qi.sequelize.fn('now');
	const uuid = { type: DataTypes.UUID, primaryKey: true, defaultValue: qi.sequelize.literal('gen_random_uuid()') };
	const userRef = { type: DataTypes.UUID, allowNull: true, references: { model: 'users', key: 'id' }, onDelete: 'SET NULL' };
	const q = (sql: string) => qi.sequelize.query(sql);

	// "sessions" was taken by Auth.js's table for database sign-in sessions, which Momentry never fills (its sign-in
	// sessions are JWT cookies); it moves aside, empty, so that a session keeps one name: a participant's visit
	await q(`ALTER TABLE sessions RENAME TO auth_sessions`);

	await qi.createTable('sessions', {
		id: uuid,
		study_id: { type: DataTypes.UUID, allowNull: false, references: { model: 'studies', key: 'id' }, onDelete: 'RESTRICT' },
		participant_id: { type: DataTypes.UUID, allowNull: false, references: { model: 'participants', key: 'id' }, onDelete: 'RESTRICT' },
		session_on: { type: DataTypes.DATEONLY, allowNull: false },
		operator: { type: DataTypes.TEXT, allowNull: false },
		task: { type: DataTypes.TEXT, allowNull: false },
		conditions: { type: DataTypes.TEXT, allowNull: true },
		setup: { type: DataTypes.JSONB, allowNull: false },
		state: { type: DataTypes.TEXT, allowNull: false, defaultValue: 'draft' },
		created_by: userRef,
		created_at: { type: DataTypes.DATE, allowNull: false, defaultValue: now },
		updated_at: { type: DataTypes.DATE, allowNull: false, defaultValue: now }
	});
	await q(`ALTER TABLE sessions ADD CONSTRAINT sessions_state CHECK (state IN ('draft', 'in_review', 'returned', 'approved'))`);
	await q(`ALTER TABLE sessions ADD CONSTRAINT sessions_setup_object CHECK (jsonb_typeof(setup) = 'object')`);
	await q(`ALTER TABLE sessions ADD CONSTRAINT sessions_operator_present CHECK (length(btrim(operator)) > 0)`);
	await q(`ALTER TABLE sessions ADD CONSTRAINT sessions_task_present CHECK (length(btrim(task)) > 0)`);
	await qi.addIndex('sessions', ['participant_id', 'session_on']);
	await qi.addIndex('sessions', ['study_id', 'state']);

	await qi.createTable('raw_uploads', {
		id: uuid,
		sha256: { type: DataTypes.TEXT, allowNull: false },
		byte_size: { type: DataTypes.BIGINT, allowNull: false },
		file_name: { type: DataTypes.TEXT, allowNull: false },
		content_type: { type: DataTypes.TEXT, allowNull: true },
		uploaded_by: userRef,
		uploaded_at: { type: DataTypes.DATE, allowNull: false, defaultValue: now }
	});
	await q(`ALTER TABLE raw_uploads ADD CONSTRAINT raw_uploads_sha256_hex CHECK (sha256 ~ '^[0-9a-f]{64}$')`);
	await q(`ALTER TABLE raw_uploads ADD CONSTRAINT raw_uploads_byte_size CHECK (byte_size > 0)`);
	await qi.addIndex('raw_uploads', ['sha256']);

	await qi.createTable('raw_upload_chunks', {
		upload_id: { type: DataTypes.UUID, primaryKey: true },
		seq: { type: DataTypes.INTEGER, primaryKey: true },
		bytes: { type: DataTypes.BLOB, allowNull: false }
	});
	// deferred: chunks are written while the file streams in, the upload row (with its hash) once it has ended
	await q(
		`ALTER TABLE raw_upload_chunks ADD CONSTRAINT raw_upload_chunks_upload_fk FOREIGN KEY (upload_id) REFERENCES raw_uploads (id) ON DELETE RESTRICT DEFERRABLE INITIALLY DEFERRED`
	);
	await q(`ALTER TABLE raw_upload_chunks ADD CONSTRAINT raw_upload_chunks_seq CHECK (seq >= 0)`);
	await q(`ALTER TABLE raw_upload_chunks ADD CONSTRAINT raw_upload_chunks_not_empty CHECK (octet_length(bytes) > 0)`);
	// the bytes are already compressed as well as they will be by whoever reads them; keep them out of line, uncompressed
	await q(`ALTER TABLE raw_upload_chunks ALTER COLUMN bytes SET STORAGE EXTERNAL`);

	await qi.createTable('trials', {
		id: uuid,
		session_id: { type: DataTypes.UUID, allowNull: false, references: { model: 'sessions', key: 'id' }, onDelete: 'RESTRICT' },
		raw_upload_id: { type: DataTypes.UUID, allowNull: false, references: { model: 'raw_uploads', key: 'id' }, onDelete: 'RESTRICT' },
		file_name: { type: DataTypes.TEXT, allowNull: false },
		sha256: { type: DataTypes.TEXT, allowNull: false },
		mapping: { type: DataTypes.JSONB, allowNull: true },
		sample_hz: { type: DataTypes.DOUBLE, allowNull: false },
		frame_count: { type: DataTypes.INTEGER, allowNull: false },
		duration_s: { type: DataTypes.DOUBLE, allowNull: false },
		channels: { type: DataTypes.ARRAY(DataTypes.TEXT), allowNull: false, defaultValue: [] },
		warnings: { type: DataTypes.JSONB, allowNull: false, defaultValue: [] },
		created_by: userRef,
		created_at: { type: DataTypes.DATE, allowNull: false, defaultValue: now }
	});
	await qi.addConstraint('trials', { type: 'unique', fields: ['session_id', 'sha256'], name: 'trials_session_sha256' });
	await q(`ALTER TABLE trials ADD CONSTRAINT trials_sha256_hex CHECK (sha256 ~ '^[0-9a-f]{64}$')`);
	await q(`ALTER TABLE trials ADD CONSTRAINT trials_numbers CHECK (sample_hz > 0 AND frame_count > 0 AND duration_s >= 0)`);
	await q(`ALTER TABLE trials ADD CONSTRAINT trials_warnings_array CHECK (jsonb_typeof(warnings) = 'array')`);
	await qi.addIndex('trials', ['raw_upload_id']);

	await qi.createTable('mapping_presets', {
		id: uuid,
		study_id: { type: DataTypes.UUID, allowNull: false, references: { model: 'studies', key: 'id' }, onDelete: 'CASCADE' },
		name: { type: DataTypes.TEXT, allowNull: false },
		mapping: { type: DataTypes.JSONB, allowNull: false },
		created_by: userRef,
		created_at: { type: DataTypes.DATE, allowNull: false, defaultValue: now }
	});
	await qi.addConstraint('mapping_presets', { type: 'unique', fields: ['study_id', 'name'], name: 'mapping_presets_study_name' });
	await q(`ALTER TABLE mapping_presets ADD CONSTRAINT mapping_presets_name_present CHECK (length(btrim(name)) > 0)`);
	await q(`ALTER TABLE mapping_presets ADD CONSTRAINT mapping_presets_mapping_object CHECK (jsonb_typeof(mapping) = 'object')`);

	await qi.createTable('runs', {
		id: uuid,
		trial_id: { type: DataTypes.UUID, allowNull: false, references: { model: 'trials', key: 'id' }, onDelete: 'RESTRICT' },
		state: { type: DataTypes.TEXT, allowNull: false, defaultValue: 'queued' },
		progress: { type: DataTypes.REAL, allowNull: false, defaultValue: 0 },
		stage: { type: DataTypes.TEXT, allowNull: true },
		options: { type: DataTypes.JSONB, allowNull: false, defaultValue: {} },
		model: { type: DataTypes.JSONB, allowNull: true },
		raw_sha256: { type: DataTypes.TEXT, allowNull: false },
		software_version: { type: DataTypes.TEXT, allowNull: false },
		error: { type: DataTypes.TEXT, allowNull: true },
		attempts: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
		created_by: userRef,
		created_at: { type: DataTypes.DATE, allowNull: false, defaultValue: now },
		started_at: { type: DataTypes.DATE, allowNull: true },
		finished_at: { type: DataTypes.DATE, allowNull: true },
		summary: { type: DataTypes.JSONB, allowNull: true },
		flagged_reason: { type: DataTypes.TEXT, allowNull: true },
		flag_decision: { type: DataTypes.TEXT, allowNull: true },
		flag_decided_by: userRef,
		flag_decided_at: { type: DataTypes.DATE, allowNull: true }
	});
	await q(`ALTER TABLE runs ADD CONSTRAINT runs_state CHECK (state IN ('queued', 'running', 'done', 'failed'))`);
	await q(`ALTER TABLE runs ADD CONSTRAINT runs_progress CHECK (progress >= 0 AND progress <= 1)`);
	await q(`ALTER TABLE runs ADD CONSTRAINT runs_attempts CHECK (attempts >= 0)`);
	await q(`ALTER TABLE runs ADD CONSTRAINT runs_raw_sha256_hex CHECK (raw_sha256 ~ '^[0-9a-f]{64}$')`);
	await qi.addIndex('runs', ['trial_id', 'created_at']);
	await qi.addIndex('runs', ['state']);
	await q(`CREATE INDEX runs_flagged ON runs (trial_id) WHERE flagged_reason IS NOT NULL AND flag_decision IS NULL`);

	await qi.createTable('run_series', {
		run_id: { type: DataTypes.UUID, primaryKey: true, references: { model: 'runs', key: 'id' }, onDelete: 'CASCADE' },
		name: { type: DataTypes.TEXT, primaryKey: true },
		quantity: { type: DataTypes.TEXT, primaryKey: true },
		unit: { type: DataTypes.TEXT, allowNull: false },
		components: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 1 },
		data: { type: DataTypes.BLOB, allowNull: false }
	});
	await q(
		`ALTER TABLE run_series ADD CONSTRAINT run_series_quantity CHECK (quantity IN ('time', 'angle', 'velocity', 'acceleration', 'moment', 'moment_per_kg', 'power', 'reaction_force'))`
	);
	await q(`ALTER TABLE run_series ADD CONSTRAINT run_series_components CHECK (components >= 1)`);
	// Float64 values: the byte length is a whole number of samples of all components
	await q(`ALTER TABLE run_series ADD CONSTRAINT run_series_data_length CHECK (octet_length(data) % (8 * components) = 0)`);
};

export const down: Migration = async ({ context: qi }) => {
	for (const t of ['run_series', 'runs', 'mapping_presets', 'trials', 'raw_upload_chunks', 'raw_uploads', 'sessions'])
		await qi.dropTable(t);
	await qi.sequelize.query(`ALTER TABLE auth_sessions RENAME TO sessions`);
};
