// Model registry: every Sequelize model of the app, registered on one connection by initModels().
import {
	DataTypes,
	Model,
	type CreationOptional,
	type InferAttributes,
	type InferCreationAttributes,
	type NonAttribute,
	type Sequelize
} from 'sequelize';
import type { StudyRole } from '../../types/studies';
import type { RunOptions, SummaryRow } from '../../processing/pipeline';
import { sessionSetupSchema, type SessionSetup } from '../../processing/session-model';
import { columnMappingSchema, type ColumnMapping } from '../../processing/recording';

/** The laboratory that runs this installation (one row per lab). */
export class Lab extends Model<InferAttributes<Lab>, InferCreationAttributes<Lab>> {
	declare id: CreationOptional<number>;
	declare slug: string;
	declare name: string;
	declare institution: string;
	declare createdAt: CreationOptional<Date>;
}

/** One append-only line of the audit log; the database refuses updates and deletes. */
export class AuditEvent extends Model<InferAttributes<AuditEvent>, InferCreationAttributes<AuditEvent>> {
	declare id: CreationOptional<string>;
	declare occurredAt: CreationOptional<Date>;
	declare actorUserId: string | null;
	declare actorLabel: string;
	declare action: string;
	declare outcome: CreationOptional<'ok' | 'denied' | 'failed'>;
	declare studyId: string | null;
	declare recordType: string | null;
	declare recordId: string | null;
	declare ipAddress: string | null;
	declare details: CreationOptional<Record<string, unknown>>;
}

export function initModels(sequelize: Sequelize): void {
	Lab.init(
		{
			id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
			slug: { type: DataTypes.TEXT, allowNull: false, unique: true },
			name: { type: DataTypes.TEXT, allowNull: false },
			institution: { type: DataTypes.TEXT, allowNull: false },
			createdAt: { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW }
		},
		{ sequelize, tableName: 'labs', modelName: 'Lab' }
	);

	AuditEvent.init(
		{
			id: { type: DataTypes.BIGINT, primaryKey: true, autoIncrement: true },
			occurredAt: { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW },
			actorUserId: { type: DataTypes.TEXT, allowNull: true },
			actorLabel: { type: DataTypes.TEXT, allowNull: false },
			action: { type: DataTypes.TEXT, allowNull: false },
			outcome: { type: DataTypes.TEXT, allowNull: false, defaultValue: 'ok' },
			studyId: { type: DataTypes.TEXT, allowNull: true },
			recordType: { type: DataTypes.TEXT, allowNull: true },
			recordId: { type: DataTypes.TEXT, allowNull: true },
			ipAddress: { type: DataTypes.TEXT, allowNull: true },
			details: { type: DataTypes.JSONB, allowNull: false, defaultValue: {} }
		},
		{ sequelize, tableName: 'audit_events', modelName: 'AuditEvent' }
	);
	initPeopleModels(sequelize);
	initSessionModels(sequelize);
}

export type { StudyRole };

/** A person who signs in (never a participant). Columns beyond Auth.js' are ours. */
export class User extends Model<InferAttributes<User>, InferCreationAttributes<User>> {
	declare id: CreationOptional<string>;
	declare name: string | null;
	declare email: string;
	declare emailVerified: Date | null;
	declare image: CreationOptional<string | null>;
	declare passwordHash: CreationOptional<string | null>;
	declare isAdmin: CreationOptional<boolean>;
	declare deactivatedAt: CreationOptional<Date | null>;
	declare sessionVersion: CreationOptional<number>;
	declare createdAt: CreationOptional<Date>;
	/** Present when a query includes StudyMember. */
	declare StudyMembers?: NonAttribute<StudyMember[]>;
}

export class Study extends Model<InferAttributes<Study>, InferCreationAttributes<Study>> {
	declare id: CreationOptional<string>;
	declare code: string;
	declare title: string;
	declare ethicsReference: CreationOptional<string | null>;
	/** ISO date (YYYY-MM-DD). */
	declare ethicsExpiresOn: CreationOptional<string | null>;
	declare defaultTable: CreationOptional<'dempster-winter-2009' | 'de-leva-1996' | 'zatsiorsky-regression-2002'>;
	declare participantPrefix: CreationOptional<string | null>;
	declare nextParticipantNumber: CreationOptional<number>;
	declare createdAt: CreationOptional<Date>;
	/** Present when a query includes StudyMember. */
	declare StudyMembers?: NonAttribute<StudyMember[]>;
}

/** One published consent form of a study; never changed after publishing (a change is a new version). */
export class ConsentFormVersion extends Model<InferAttributes<ConsentFormVersion>, InferCreationAttributes<ConsentFormVersion>> {
	declare id: CreationOptional<string>;
	declare studyId: string;
	declare version: number;
	declare bodyMarkdown: string;
	declare confirmations: string[];
	declare publishedAt: CreationOptional<Date>;
	declare publishedBy: string | null;
}

export type Sex = 'female' | 'male' | 'not reported';

/** A participant's research record: pseudonymous code and body data (no personal data here). */
export class Participant extends Model<InferAttributes<Participant>, InferCreationAttributes<Participant>> {
	declare id: CreationOptional<string>;
	declare studyId: string;
	declare code: string;
	declare sex: Sex;
	declare birthYear: number | null;
	declare bodyMassKg: number;
	declare statureM: number;
	declare dominantSide: 'left' | 'right' | null;
	declare notes: string | null;
	declare createdAt: CreationOptional<Date>;
}

/** A participant's personal data, kept apart so that research reads never touch it. */
export class ParticipantPersonal extends Model<InferAttributes<ParticipantPersonal>, InferCreationAttributes<ParticipantPersonal>> {
	declare participantId: string;
	declare fullName: string | null;
	declare email: string | null;
	declare phone: string | null;
}

/** One measurement of one segment's length; the history is kept, the latest per segment is used. */
export class ParticipantLength extends Model<InferAttributes<ParticipantLength>, InferCreationAttributes<ParticipantLength>> {
	declare id: CreationOptional<string>;
	declare participantId: string;
	declare segment: string;
	declare lengthM: number;
	/** ISO date (YYYY-MM-DD). */
	declare measuredOn: string;
	declare createdAt: CreationOptional<Date>;
}

export class StudyMember extends Model<InferAttributes<StudyMember>, InferCreationAttributes<StudyMember>> {
	declare studyId: string;
	declare userId: string;
	declare role: StudyRole;
	declare createdAt: CreationOptional<Date>;
	/** Present when a query includes User (its model name is Auth.js' 'user') or Study. */
	declare user?: NonAttribute<User>;
	declare Study?: NonAttribute<Study>;
}

export class OneTimeToken extends Model<InferAttributes<OneTimeToken>, InferCreationAttributes<OneTimeToken>> {
	declare id: CreationOptional<string>;
	declare purpose: 'invitation' | 'password-reset';
	declare tokenHash: string;
	declare userId: string;
	declare expiresAt: Date;
	declare usedAt: CreationOptional<Date | null>;
	declare createdAt: CreationOptional<Date>;
}

export class SignInFailure extends Model<InferAttributes<SignInFailure>, InferCreationAttributes<SignInFailure>> {
	declare id: CreationOptional<string>;
	declare email: string | null;
	declare ipAddress: string | null;
	declare occurredAt: CreationOptional<Date>;
}

export function initPeopleModels(sequelize: Sequelize): void {
	User.init(
		{
			id: { type: DataTypes.UUID, primaryKey: true, defaultValue: DataTypes.UUIDV4 },
			name: { type: DataTypes.TEXT, allowNull: true },
			email: { type: DataTypes.TEXT, allowNull: false, unique: true },
			emailVerified: { type: DataTypes.DATE, allowNull: true },
			image: { type: DataTypes.TEXT, allowNull: true },
			passwordHash: { type: DataTypes.TEXT, allowNull: true },
			isAdmin: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false },
			deactivatedAt: { type: DataTypes.DATE, allowNull: true },
			sessionVersion: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
			createdAt: { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW }
		},
		{ sequelize, tableName: 'users', modelName: 'user' }
	);
	Study.init(
		{
			id: { type: DataTypes.UUID, primaryKey: true, defaultValue: DataTypes.UUIDV4 },
			code: { type: DataTypes.TEXT, allowNull: false, unique: true },
			title: { type: DataTypes.TEXT, allowNull: false },
			ethicsReference: { type: DataTypes.TEXT, allowNull: true },
			ethicsExpiresOn: { type: DataTypes.DATEONLY, allowNull: true },
			defaultTable: { type: DataTypes.TEXT, allowNull: false, defaultValue: 'de-leva-1996' },
			participantPrefix: { type: DataTypes.TEXT, allowNull: true },
			nextParticipantNumber: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 1 },
			createdAt: { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW }
		},
		{ sequelize, tableName: 'studies', modelName: 'Study' }
	);
	ConsentFormVersion.init(
		{
			id: { type: DataTypes.UUID, primaryKey: true, defaultValue: DataTypes.UUIDV4 },
			studyId: { type: DataTypes.UUID, allowNull: false },
			version: { type: DataTypes.INTEGER, allowNull: false },
			bodyMarkdown: { type: DataTypes.TEXT, allowNull: false },
			confirmations: { type: DataTypes.JSONB, allowNull: false, defaultValue: [] },
			publishedAt: { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW },
			publishedBy: { type: DataTypes.UUID, allowNull: true }
		},
		{ sequelize, tableName: 'consent_form_versions', modelName: 'ConsentFormVersion' }
	);
	Participant.init(
		{
			id: { type: DataTypes.UUID, primaryKey: true, defaultValue: DataTypes.UUIDV4 },
			studyId: { type: DataTypes.UUID, allowNull: false },
			code: { type: DataTypes.TEXT, allowNull: false, unique: true },
			sex: { type: DataTypes.TEXT, allowNull: false },
			birthYear: { type: DataTypes.INTEGER, allowNull: true },
			bodyMassKg: { type: DataTypes.DOUBLE, allowNull: false },
			statureM: { type: DataTypes.DOUBLE, allowNull: false },
			dominantSide: { type: DataTypes.TEXT, allowNull: true },
			notes: { type: DataTypes.TEXT, allowNull: true },
			createdAt: { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW }
		},
		{ sequelize, tableName: 'participants', modelName: 'Participant' }
	);
	ParticipantPersonal.init(
		{
			participantId: { type: DataTypes.UUID, primaryKey: true },
			fullName: { type: DataTypes.TEXT, allowNull: true },
			email: { type: DataTypes.TEXT, allowNull: true },
			phone: { type: DataTypes.TEXT, allowNull: true }
		},
		{ sequelize, tableName: 'participant_personal', modelName: 'ParticipantPersonal' }
	);
	ParticipantLength.init(
		{
			id: { type: DataTypes.UUID, primaryKey: true, defaultValue: DataTypes.UUIDV4 },
			participantId: { type: DataTypes.UUID, allowNull: false },
			segment: { type: DataTypes.TEXT, allowNull: false },
			lengthM: { type: DataTypes.DOUBLE, allowNull: false },
			measuredOn: { type: DataTypes.DATEONLY, allowNull: false },
			createdAt: { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW }
		},
		{ sequelize, tableName: 'participant_lengths', modelName: 'ParticipantLength' }
	);
	StudyMember.init(
		{
			studyId: { type: DataTypes.UUID, primaryKey: true },
			userId: { type: DataTypes.UUID, primaryKey: true },
			role: { type: DataTypes.TEXT, allowNull: false },
			createdAt: { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW }
		},
		{ sequelize, tableName: 'study_members', modelName: 'StudyMember' }
	);
	OneTimeToken.init(
		{
			id: { type: DataTypes.UUID, primaryKey: true, defaultValue: DataTypes.UUIDV4 },
			purpose: { type: DataTypes.TEXT, allowNull: false },
			tokenHash: { type: DataTypes.TEXT, allowNull: false, unique: true },
			userId: { type: DataTypes.UUID, allowNull: false },
			expiresAt: { type: DataTypes.DATE, allowNull: false },
			usedAt: { type: DataTypes.DATE, allowNull: true },
			createdAt: { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW }
		},
		{ sequelize, tableName: 'one_time_tokens', modelName: 'OneTimeToken' }
	);
	SignInFailure.init(
		{
			id: { type: DataTypes.BIGINT, primaryKey: true, autoIncrement: true },
			email: { type: DataTypes.TEXT, allowNull: true },
			ipAddress: { type: DataTypes.TEXT, allowNull: true },
			occurredAt: { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW }
		},
		{ sequelize, tableName: 'sign_in_failures', modelName: 'SignInFailure' }
	);
	StudyMember.belongsTo(User, { foreignKey: 'userId' });
	StudyMember.belongsTo(Study, { foreignKey: 'studyId' });
	User.hasMany(StudyMember, { foreignKey: 'userId' });
	Study.hasMany(StudyMember, { foreignKey: 'studyId' });
}

// ---- sessions, raw uploads, trials, mapping presets, runs (migration 0005) ----

export type SessionState = 'draft' | 'in_review' | 'returned' | 'approved';

/** One visit of a participant: date, operator, task, conditions and the model set-up (a SessionSetup). */
export class Session extends Model<InferAttributes<Session>, InferCreationAttributes<Session>> {
	declare id: CreationOptional<string>;
	declare studyId: string;
	declare participantId: string;
	/** ISO date (YYYY-MM-DD). */
	declare sessionOn: string;
	declare operator: string;
	declare task: string;
	declare conditions: string | null;
	/** Validated before it is stored, and parsed with the same schema when it is read (session-model.ts). */
	declare setup: SessionSetup;
	declare state: CreationOptional<SessionState>;
	declare createdBy: string | null;
	declare createdAt: CreationOptional<Date>;
	declare updatedAt: CreationOptional<Date>;
}

/** The bytes of one uploaded file as received; the chunks live in raw_upload_chunks. */
export class RawUpload extends Model<InferAttributes<RawUpload>, InferCreationAttributes<RawUpload>> {
	declare id: CreationOptional<string>;
	declare sha256: string;
	/** BIGINT: pg hands it back as a string. */
	declare byteSize: number | string;
	declare fileName: string;
	declare contentType: string | null;
	declare uploadedBy: string | null;
	declare uploadedAt: CreationOptional<Date>;
}

export class RawUploadChunk extends Model<InferAttributes<RawUploadChunk>, InferCreationAttributes<RawUploadChunk>> {
	declare uploadId: string;
	declare seq: number;
	declare bytes: Buffer;
}

/** One uploaded recording of a session, with what parsing found in it. */
export class Trial extends Model<InferAttributes<Trial>, InferCreationAttributes<Trial>> {
	declare id: CreationOptional<string>;
	declare sessionId: string;
	declare rawUploadId: string;
	declare fileName: string;
	declare sha256: string;
	/** The column mapping when the file needed one; parsed with its schema when it is read (recording.ts). */
	declare mapping: ColumnMapping | null;
	declare sampleHz: number;
	declare frameCount: number;
	declare durationS: number;
	declare channels: string[];
	declare warnings: CreationOptional<unknown[]>;
	declare createdBy: string | null;
	declare createdAt: CreationOptional<Date>;
}

/** A saved column mapping a study reuses for files from another system. */
export class MappingPreset extends Model<InferAttributes<MappingPreset>, InferCreationAttributes<MappingPreset>> {
	declare id: CreationOptional<string>;
	declare studyId: string;
	declare name: string;
	/** Parsed with the column mapping's schema when it is read (recording.ts). */
	declare mapping: ColumnMapping;
	declare createdBy: string | null;
	declare createdAt: CreationOptional<Date>;
}

export type RunState = 'queued' | 'running' | 'done' | 'failed';

/** One processing of a trial with stated options; reruns add runs. */
export class Run extends Model<InferAttributes<Run>, InferCreationAttributes<Run>> {
	declare id: CreationOptional<string>;
	declare trialId: string;
	declare state: CreationOptional<RunState>;
	declare progress: CreationOptional<number>;
	declare stage: CreationOptional<string | null>;
	/** The run's options as validated when it was started (read back through storedRunOptions for processing). */
	declare options: CreationOptional<RunOptions>;
	declare model: CreationOptional<Record<string, unknown> | null>;
	declare rawSha256: string;
	declare softwareVersion: string;
	declare error: CreationOptional<string | null>;
	declare attempts: CreationOptional<number>;
	declare createdBy: string | null;
	declare createdAt: CreationOptional<Date>;
	declare startedAt: CreationOptional<Date | null>;
	declare finishedAt: CreationOptional<Date | null>;
	/** Peaks, range and mean per DOF (SummaryRow of the pipeline; read through summaryRows, which tolerates older shapes). */
	declare summary: CreationOptional<SummaryRow[] | null>;
	/** Where results are not reliable near the trial's ends (EdgeZone of the pipeline); null for runs made before edge zones. */
	declare edgeZone: CreationOptional<Record<string, unknown> | null>;
	declare flaggedReason: CreationOptional<string | null>;
	declare flagDecision: CreationOptional<string | null>;
	declare flagDecidedBy: CreationOptional<string | null>;
	declare flagDecidedAt: CreationOptional<Date | null>;
	/** The queue job processing the run now (null before job ids were kept: the first job's id is the run's id). */
	declare jobId: CreationOptional<string | null>;
}

/** One result vector of a run (Float64 little-endian, `components` values per sample, interleaved). */
export class RunSeries extends Model<InferAttributes<RunSeries>, InferCreationAttributes<RunSeries>> {
	declare runId: string;
	declare name: string;
	declare quantity: 'time' | 'angle' | 'velocity' | 'acceleration' | 'moment' | 'moment_per_kg' | 'power' | 'reaction_force';
	declare unit: string;
	declare components: CreationOptional<number>;
	declare data: Buffer;
}

export function initSessionModels(sequelize: Sequelize): void {
	const uuidPk = { type: DataTypes.UUID, primaryKey: true, defaultValue: DataTypes.UUIDV4 };
	const createdAt = { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW };
	Session.init(
		{
			id: uuidPk,
			studyId: { type: DataTypes.UUID, allowNull: false },
			participantId: { type: DataTypes.UUID, allowNull: false },
			sessionOn: { type: DataTypes.DATEONLY, allowNull: false },
			operator: { type: DataTypes.TEXT, allowNull: false },
			task: { type: DataTypes.TEXT, allowNull: false },
			conditions: { type: DataTypes.TEXT, allowNull: true },
			setup: {
				type: DataTypes.JSONB,
				allowNull: false,
				get(this: Session): SessionSetup {
					return sessionSetupSchema.parse(this.getDataValue('setup'));
				}
			},
			state: { type: DataTypes.TEXT, allowNull: false, defaultValue: 'draft' },
			createdBy: { type: DataTypes.UUID, allowNull: true },
			createdAt,
			updatedAt: { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW }
		},
		{ sequelize, tableName: 'sessions', modelName: 'Session' }
	);
	RawUpload.init(
		{
			id: uuidPk,
			sha256: { type: DataTypes.TEXT, allowNull: false },
			byteSize: { type: DataTypes.BIGINT, allowNull: false },
			fileName: { type: DataTypes.TEXT, allowNull: false },
			contentType: { type: DataTypes.TEXT, allowNull: true },
			uploadedBy: { type: DataTypes.UUID, allowNull: true },
			uploadedAt: { type: DataTypes.DATE, allowNull: false, defaultValue: DataTypes.NOW }
		},
		{ sequelize, tableName: 'raw_uploads', modelName: 'RawUpload' }
	);
	RawUploadChunk.init(
		{
			uploadId: { type: DataTypes.UUID, primaryKey: true },
			seq: { type: DataTypes.INTEGER, primaryKey: true },
			bytes: { type: DataTypes.BLOB, allowNull: false }
		},
		{ sequelize, tableName: 'raw_upload_chunks', modelName: 'RawUploadChunk' }
	);
	Trial.init(
		{
			id: uuidPk,
			sessionId: { type: DataTypes.UUID, allowNull: false },
			rawUploadId: { type: DataTypes.UUID, allowNull: false },
			fileName: { type: DataTypes.TEXT, allowNull: false },
			sha256: { type: DataTypes.TEXT, allowNull: false },
			mapping: {
				type: DataTypes.JSONB,
				allowNull: true,
				get(this: Trial): ColumnMapping | null {
					const v: unknown = this.getDataValue('mapping');
					return v == null ? null : columnMappingSchema.parse(v);
				}
			},
			sampleHz: { type: DataTypes.DOUBLE, allowNull: false },
			frameCount: { type: DataTypes.INTEGER, allowNull: false },
			durationS: { type: DataTypes.DOUBLE, allowNull: false },
			channels: { type: DataTypes.ARRAY(DataTypes.TEXT), allowNull: false, defaultValue: [] },
			warnings: { type: DataTypes.JSONB, allowNull: false, defaultValue: [] },
			createdBy: { type: DataTypes.UUID, allowNull: true },
			createdAt
		},
		{ sequelize, tableName: 'trials', modelName: 'Trial' }
	);
	MappingPreset.init(
		{
			id: uuidPk,
			studyId: { type: DataTypes.UUID, allowNull: false },
			name: { type: DataTypes.TEXT, allowNull: false },
			mapping: {
				type: DataTypes.JSONB,
				allowNull: false,
				get(this: MappingPreset): ColumnMapping {
					return columnMappingSchema.parse(this.getDataValue('mapping'));
				}
			},
			createdBy: { type: DataTypes.UUID, allowNull: true },
			createdAt
		},
		{ sequelize, tableName: 'mapping_presets', modelName: 'MappingPreset' }
	);
	Run.init(
		{
			id: uuidPk,
			trialId: { type: DataTypes.UUID, allowNull: false },
			state: { type: DataTypes.TEXT, allowNull: false, defaultValue: 'queued' },
			progress: { type: DataTypes.REAL, allowNull: false, defaultValue: 0 },
			stage: { type: DataTypes.TEXT, allowNull: true },
			options: { type: DataTypes.JSONB, allowNull: false, defaultValue: {} },
			model: { type: DataTypes.JSONB, allowNull: true },
			rawSha256: { type: DataTypes.TEXT, allowNull: false },
			softwareVersion: { type: DataTypes.TEXT, allowNull: false },
			error: { type: DataTypes.TEXT, allowNull: true },
			attempts: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
			createdBy: { type: DataTypes.UUID, allowNull: true },
			createdAt,
			startedAt: { type: DataTypes.DATE, allowNull: true },
			finishedAt: { type: DataTypes.DATE, allowNull: true },
			summary: { type: DataTypes.JSONB, allowNull: true },
			edgeZone: { type: DataTypes.JSONB, allowNull: true },
			flaggedReason: { type: DataTypes.TEXT, allowNull: true },
			flagDecision: { type: DataTypes.TEXT, allowNull: true },
			flagDecidedBy: { type: DataTypes.UUID, allowNull: true },
			flagDecidedAt: { type: DataTypes.DATE, allowNull: true },
			jobId: { type: DataTypes.UUID, allowNull: true }
		},
		{ sequelize, tableName: 'runs', modelName: 'Run' }
	);
	RunSeries.init(
		{
			runId: { type: DataTypes.UUID, primaryKey: true },
			name: { type: DataTypes.TEXT, primaryKey: true },
			quantity: { type: DataTypes.TEXT, primaryKey: true },
			unit: { type: DataTypes.TEXT, allowNull: false },
			components: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 1 },
			data: { type: DataTypes.BLOB, allowNull: false }
		},
		{ sequelize, tableName: 'run_series', modelName: 'RunSeries' }
	);
}
