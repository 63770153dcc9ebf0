// Model registry: every Sequelize model of the app, registered on one connection by initModels(). A model is its class
// (the typed attributes) and its columns (below the classes, in the words of the column helpers); JSON columns are
// read back through their zod schemas, so services get typed values.
import {
	DataTypes,
	Model,
	type Attributes,
	type CreationOptional,
	type DataType,
	type InferAttributes,
	type InferCreationAttributes,
	type ModelAttributeColumnOptions,
	type ModelAttributes,
	type ModelStatic,
	type NonAttribute,
	type Sequelize
} from 'sequelize';
import { z } from 'zod';
import type { StudyRole } from '../../types/studies';
import type { RunState, StoredRunOptions } from '../../types/runs';
import type { SessionState } from '../../types/sessions';
import type { EventSet } from '../../types/review';
import type { EdgeZone } from '../../processing/pipeline';
import { sessionSetupSchema, type SessionSetup } from '../../processing/session-model';
import { columnMappingSchema, type ColumnMapping } from '../../processing/recording';
import type { ContactView, GaitCycleView, GaitEventView } from '../../types/gait';
import type { SeriesQuantity } from '../runs/compute';
import {
	contactViewSchema,
	cycleViewSchema,
	eventViewSchema,
	storedForcesSchema,
	storedSpatiotemporalSchema,
	type StoredForces
} from './gait-json';
import { forcePlateSchema, type ForcePlate as PlateGeometry, type PlateOutput } from '../../processing/forces/plate';
import {
	modelFieldsSchema,
	storedEdgeZoneSchema,
	storedOptionsSchema,
	storedSummarySchema,
	type RunModelFields,
	type StoredSummaryRow
} from './run-json';

/** A model typed by the attributes its class declares (Sequelize's InferAttributes pattern, written once). */
abstract class Typed<M extends Model> extends Model<InferAttributes<M>, InferCreationAttributes<M>> {}

/** A row with the key most tables have (a UUID made with the row) and the time it was made. */
abstract class Keyed<M extends Model> extends Typed<M> {
	declare id: CreationOptional<string>;
	declare createdAt: CreationOptional<Date>;
}

/** The laboratory that runs this installation (one row per lab). */
export class Lab extends Typed<Lab> {
	declare id: CreationOptional<number>;
	declare slug: string;
	declare name: string;
	declare institution: string;
	declare createdAt: CreationOptional<Date>;
}

/** One append-only line of the audit log; the database refuses updates and deletes. */
export class AuditEvent extends Typed<AuditEvent> {
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

export type { RunState, SessionState, StudyRole };

/** A person who signs in (never a participant). Columns beyond Auth.js' are ours. */
export class User extends Keyed<User> {
	declare name: string | null;
	declare email: string;
	declare emailVerified: Date | null;
	declare image: CreationOptional<string | null>;
	declare passwordHash: CreationOptional<string | null>;
	declare isAdmin: CreationOptional<boolean>;
	declare deactivatedAt: CreationOptional<Date | null>;
	declare sessionVersion: CreationOptional<number>;
	/** Present when a query includes StudyMember. */
	declare StudyMembers?: NonAttribute<StudyMember[]>;
}

export class Study extends Keyed<Study> {
	declare code: string;
	declare title: string;
	declare ethicsReference: CreationOptional<string | null>;
	/** ISO date (YYYY-MM-DD). */
	declare ethicsExpiresOn: CreationOptional<string | null>;
	declare defaultTable: CreationOptional<'dempster-winter-2009' | 'de-leva-1996' | 'zatsiorsky-regression-2002'>;
	declare participantPrefix: CreationOptional<string | null>;
	declare nextParticipantNumber: CreationOptional<number>;
	/** Present when a query includes StudyMember. */
	declare StudyMembers?: NonAttribute<StudyMember[]>;
}

/** One published consent form of a study; never changed after publishing (a change is a new version). */
export class ConsentFormVersion extends Typed<ConsentFormVersion> {
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
export class Participant extends Keyed<Participant> {
	declare studyId: string;
	declare code: string;
	declare sex: Sex;
	declare birthYear: number | null;
	declare bodyMassKg: number;
	declare statureM: number;
	declare dominantSide: 'left' | 'right' | null;
	declare notes: string | null;
}

/** A participant's personal data, kept apart so that research reads never touch it. */
export class ParticipantPersonal extends Typed<ParticipantPersonal> {
	declare participantId: string;
	declare fullName: string | null;
	declare email: string | null;
	declare phone: string | null;
}

/** One measurement of one segment's length; the history is kept, the latest per segment is used. */
export class ParticipantLength extends Keyed<ParticipantLength> {
	declare participantId: string;
	declare segment: string;
	declare lengthM: number;
	/** ISO date (YYYY-MM-DD). */
	declare measuredOn: string;
}

export class StudyMember extends Typed<StudyMember> {
	declare studyId: string;
	declare userId: string;
	declare role: StudyRole;
	declare createdAt: CreationOptional<Date>;
	/** Present when a query includes User (its model name is Auth.js' 'user') or Study. */
	declare user?: NonAttribute<User>;
	declare Study?: NonAttribute<Study>;
}

export class OneTimeToken extends Keyed<OneTimeToken> {
	declare purpose: 'invitation' | 'password-reset';
	declare tokenHash: string;
	declare userId: string;
	declare expiresAt: Date;
	declare usedAt: CreationOptional<Date | null>;
}

export class SignInFailure extends Typed<SignInFailure> {
	declare id: CreationOptional<string>;
	declare email: string | null;
	declare ipAddress: string | null;
	declare occurredAt: CreationOptional<Date>;
}

// ---- sessions, raw uploads, trials, mapping presets, runs (migration 0005) ----

/** One visit of a participant: date, operator, task, conditions and the model set-up (a SessionSetup). */
export class Session extends Keyed<Session> {
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
	declare updatedAt: CreationOptional<Date>;
}

/** The bytes of one uploaded file as received; the chunks live in raw_upload_chunks. */
export class RawUpload extends Typed<RawUpload> {
	declare id: CreationOptional<string>;
	declare sha256: string;
	/** BIGINT: pg hands it back as a string. */
	declare byteSize: number | string;
	declare fileName: string;
	declare contentType: string | null;
	declare uploadedBy: string | null;
	declare uploadedAt: CreationOptional<Date>;
}

export class RawUploadChunk extends Typed<RawUploadChunk> {
	declare uploadId: string;
	declare seq: number;
	declare bytes: Buffer;
}

/** One uploaded recording of a session, with what parsing found in it. */
export class Trial extends Keyed<Trial> {
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
	/** The force file uploaded with the angle file (migration 0011): its raw bytes, name, SHA-256, rate and plates; all null without one. */
	declare forceRawUploadId: CreationOptional<string | null>;
	declare forceFileName: CreationOptional<string | null>;
	declare forceSha256: CreationOptional<string | null>;
	declare forceSampleHz: CreationOptional<number | null>;
	/** The plates (names) whose columns the force file holds. */
	declare forcePlates: CreationOptional<string[] | null>;
	/** The column mapping the force file needed (parsed with its schema when read). */
	declare forceMapping: CreationOptional<ColumnMapping | null>;
}

/** A saved column mapping a study reuses for files from another system. */
export class MappingPreset extends Keyed<MappingPreset> {
	declare studyId: string;
	declare name: string;
	/** Parsed with the column mapping's schema when it is read (recording.ts). */
	declare mapping: ColumnMapping;
	declare createdBy: string | null;
}

/** One processing of a trial with stated options; reruns add runs. */
export class Run extends Keyed<Run> {
	declare trialId: string;
	declare state: CreationOptional<RunState>;
	declare progress: CreationOptional<number>;
	declare stage: CreationOptional<string | null>;
	/** The run's options as validated when it was started (processing reads them back through storedRunOptions). */
	declare options: CreationOptional<StoredRunOptions>;
	/** What the run used (the model record of compute.ts), kept and shown as stored; `modelFields` reads it. */
	declare model: CreationOptional<Record<string, unknown> | null>;
	declare rawSha256: string;
	declare softwareVersion: string;
	declare error: CreationOptional<string | null>;
	declare attempts: CreationOptional<number>;
	declare createdBy: string | null;
	declare startedAt: CreationOptional<Date | null>;
	declare finishedAt: CreationOptional<Date | null>;
	/** Peaks, range and mean per DOF (SummaryRow of the pipeline, read leniently: older runs lack some figures). */
	declare summary: CreationOptional<StoredSummaryRow[] | null>;
	/** Where results are not reliable near the trial's ends (EdgeZone of the pipeline); null for runs made before edge zones. */
	declare edgeZone: CreationOptional<EdgeZone | null>;
	declare flaggedReason: CreationOptional<string | null>;
	declare flagDecision: CreationOptional<string | null>;
	declare flagDecidedBy: CreationOptional<string | null>;
	declare flagDecidedAt: CreationOptional<Date | null>;
	/** The queue job processing the run now (null before job ids were kept: the first job's id is the run's id). */
	declare jobId: CreationOptional<string | null>;

	/** The parts of the stored model record that results read (DOF order and sign rules, body mass, table, gravity, segments). */
	get modelFields(): NonAttribute<RunModelFields> {
		return modelFieldsSchema.parse(this.model);
	}
}

/** One result vector of a run (Float64 little-endian, `components` values per sample, interleaved). */
export class RunSeries extends Typed<RunSeries> {
	declare runId: string;
	declare name: string;
	declare quantity: SeriesQuantity;
	declare unit: string;
	declare components: CreationOptional<number>;
	declare data: Buffer;
}

/** A run's cycle events: one current set of times (s) per run that cuts it into repetitions (migration 0007). */
export class CycleEvent extends Keyed<CycleEvent> {
	declare runId: string;
	/** Seconds on the run's time axis, strictly increasing, at least two (one cycle). */
	declare times: number[];
	declare source: EventSet['source'];
	/** The detection rule accepted (DOF, kind, threshold …), null for manual marks. */
	declare rule: Record<string, unknown> | null;
	declare createdBy: string | null;
	declare updatedAt: CreationOptional<Date>;
}

/**
 * A gait run's results besides its series (migration 0011): how the forces were brought to the angle rate, the
 * contacts, gait events, cycles and spatiotemporal parameters, as the worker computed them (runs/gait-results.ts
 * writes and reads them; shapes in StoredGait there).
 */
/** A gait run's results (migration 0011); its JSON columns parsed when read with the schemas of gait-json.ts. */
export class RunGait extends Typed<RunGait> {
	declare runId: string;
	declare forces: StoredForces;
	declare contacts: ContactView[];
	declare events: GaitEventView[];
	declare cycles: GaitCycleView[];
	declare spatiotemporal: z.output<typeof storedSpatiotemporalSchema>;
	declare createdAt: CreationOptional<Date>;
}

/**
 * A force plate of the lab (migration 0010): its top-surface corners and axes in lab axes, measuring-origin depth and
 * output kind; archived (never deleted) when it goes out of use. `plate` hands out the pure ForcePlate.
 */
export class ForcePlate extends Keyed<ForcePlate> {
	declare labId: number;
	/** The column prefix of its channels in recordings; unique among the lab's plates in use. */
	declare name: string;
	/** Parsed with the plate schema's corner tuples when it is read (processing/forces/plate.ts). */
	declare corners: PlateGeometry['corners'];
	/** R_plate→lab, row-major; parsed with the plate schema's 3×3 when it is read. */
	declare axes: PlateGeometry['axes'];
	declare originDepthM: number;
	declare output: PlateOutput;
	declare updatedAt: CreationOptional<Date>;
	declare archivedAt: CreationOptional<Date | null>;

	/** The plate as the processing code takes it. */
	get plate(): NonAttribute<PlateGeometry> {
		return { name: this.name, corners: this.corners, axes: this.axes, originDepthM: this.originDepthM, output: this.output };
	}
}

// ---- columns -----------------------------------------------------------------------------------------------------

const { BIGINT, BLOB, BOOLEAN, DATE, DATEONLY, DOUBLE, INTEGER, JSONB, REAL, TEXT, UUID } = DataTypes;
type Column = ModelAttributeColumnOptions;

/** NOT NULL, with the column's default when it has one. */
const required = (type: DataType, defaultValue?: unknown): Column =>
	defaultValue === undefined ? { type, allowNull: false } : { type, allowNull: false, defaultValue };
/** May hold NULL. */
const nullable = (type: DataType): Column => ({ type, allowNull: true });
/** NOT NULL and UNIQUE. */
const unique = (type: DataType): Column => ({ type, allowNull: false, unique: true });
/** The key of most tables: a UUID made with the row. */
const uuidKey = (): Column => ({ type: UUID, primaryKey: true, defaultValue: DataTypes.UUIDV4 });
/** A key the database counts up. */
const serialKey = (type: DataType): Column => ({ type, primaryKey: true, autoIncrement: true });
/** (Part of) a key given by the row itself, e.g. of a table that belongs to another row. */
const keyPart = (type: DataType): Column => ({ type, primaryKey: true });
/** When the row was made (or last changed): now, unless given. */
const now = (): Column => required(DATE, DataTypes.NOW);

/** A JSONB column read back through `schema` (NULL stays null where the column allows it), so the model hands out typed values. */
function json(key: string, schema: z.ZodType, options: { allowNull: boolean; defaultValue?: unknown }): Column {
	return {
		type: JSONB,
		...options,
		get(this: Model) {
			const v: unknown = this.getDataValue(key);
			return options.allowNull && v == null ? null : schema.parse(v);
		}
	};
}

/** Registers every model on the connection, with its table, its columns and the associations queries include. */
export function initModels(sequelize: Sequelize): void {
	// `columns` names every attribute of the class (TypeScript checks it); the model name is what associations use
	const register = <M extends Model>(
		model: ModelStatic<M>,
		tableName: string,
		modelName: string,
		columns: ModelAttributes<M, Attributes<M>>
	) => model.init(columns, { sequelize, tableName, modelName });

	register(Lab, 'labs', 'Lab', {
		id: serialKey(INTEGER),
		slug: unique(TEXT),
		name: required(TEXT),
		institution: required(TEXT),
		createdAt: now()
	});
	register(AuditEvent, 'audit_events', 'AuditEvent', {
		id: serialKey(BIGINT),
		occurredAt: now(),
		actorUserId: nullable(TEXT),
		actorLabel: required(TEXT),
		action: required(TEXT),
		outcome: required(TEXT, 'ok'),
		studyId: nullable(TEXT),
		recordType: nullable(TEXT),
		recordId: nullable(TEXT),
		ipAddress: nullable(TEXT),
		details: required(JSONB, {})
	});

	// ---- people, studies, participants (migrations 0002–0004)
	// Auth.js' adapter finds the people under the model name 'user'
	register(User, 'users', 'user', {
		id: uuidKey(),
		name: nullable(TEXT),
		email: unique(TEXT),
		emailVerified: nullable(DATE),
		image: nullable(TEXT),
		passwordHash: nullable(TEXT),
		isAdmin: required(BOOLEAN, false),
		deactivatedAt: nullable(DATE),
		sessionVersion: required(INTEGER, 0),
		createdAt: now()
	});
	register(Study, 'studies', 'Study', {
		id: uuidKey(),
		code: unique(TEXT),
		title: required(TEXT),
		ethicsReference: nullable(TEXT),
		ethicsExpiresOn: nullable(DATEONLY),
		defaultTable: required(TEXT, 'de-leva-1996'),
		participantPrefix: nullable(TEXT),
		nextParticipantNumber: required(INTEGER, 1),
		createdAt: now()
	});
	register(ConsentFormVersion, 'consent_form_versions', 'ConsentFormVersion', {
		id: uuidKey(),
		studyId: required(UUID),
		version: required(INTEGER),
		bodyMarkdown: required(TEXT),
		confirmations: required(JSONB, []),
		publishedAt: now(),
		publishedBy: nullable(UUID)
	});
	register(Participant, 'participants', 'Participant', {
		id: uuidKey(),
		studyId: required(UUID),
		code: unique(TEXT),
		sex: required(TEXT),
		birthYear: nullable(INTEGER),
		bodyMassKg: required(DOUBLE),
		statureM: required(DOUBLE),
		dominantSide: nullable(TEXT),
		notes: nullable(TEXT),
		createdAt: now()
	});
	register(ParticipantPersonal, 'participant_personal', 'ParticipantPersonal', {
		participantId: keyPart(UUID),
		fullName: nullable(TEXT),
		email: nullable(TEXT),
		phone: nullable(TEXT)
	});
	register(ParticipantLength, 'participant_lengths', 'ParticipantLength', {
		id: uuidKey(),
		participantId: required(UUID),
		segment: required(TEXT),
		lengthM: required(DOUBLE),
		measuredOn: required(DATEONLY),
		createdAt: now()
	});
	register(StudyMember, 'study_members', 'StudyMember', {
		studyId: keyPart(UUID),
		userId: keyPart(UUID),
		role: required(TEXT),
		createdAt: now()
	});
	register(OneTimeToken, 'one_time_tokens', 'OneTimeToken', {
		id: uuidKey(),
		purpose: required(TEXT),
		tokenHash: unique(TEXT),
		userId: required(UUID),
		expiresAt: required(DATE),
		usedAt: nullable(DATE),
		createdAt: now()
	});
	register(SignInFailure, 'sign_in_failures', 'SignInFailure', {
		id: serialKey(BIGINT),
		email: nullable(TEXT),
		ipAddress: nullable(TEXT),
		occurredAt: now()
	});
	StudyMember.belongsTo(User, { foreignKey: 'userId' });
	StudyMember.belongsTo(Study, { foreignKey: 'studyId' });
	User.hasMany(StudyMember, { foreignKey: 'userId' });
	Study.hasMany(StudyMember, { foreignKey: 'studyId' });

	// ---- sessions, raw uploads, trials, mapping presets, runs (migrations 0005–0009)
	register(Session, 'sessions', 'Session', {
		id: uuidKey(),
		studyId: required(UUID),
		participantId: required(UUID),
		sessionOn: required(DATEONLY),
		operator: required(TEXT),
		task: required(TEXT),
		conditions: nullable(TEXT),
		setup: json('setup', sessionSetupSchema, { allowNull: false }),
		state: required(TEXT, 'draft'),
		createdBy: nullable(UUID),
		createdAt: now(),
		updatedAt: now()
	});
	register(RawUpload, 'raw_uploads', 'RawUpload', {
		id: uuidKey(),
		sha256: required(TEXT),
		byteSize: required(BIGINT),
		fileName: required(TEXT),
		contentType: nullable(TEXT),
		uploadedBy: nullable(UUID),
		uploadedAt: now()
	});
	register(RawUploadChunk, 'raw_upload_chunks', 'RawUploadChunk', {
		uploadId: keyPart(UUID),
		seq: keyPart(INTEGER),
		bytes: required(BLOB)
	});
	register(Trial, 'trials', 'Trial', {
		id: uuidKey(),
		sessionId: required(UUID),
		rawUploadId: required(UUID),
		fileName: required(TEXT),
		sha256: required(TEXT),
		mapping: json('mapping', columnMappingSchema, { allowNull: true }),
		sampleHz: required(DOUBLE),
		frameCount: required(INTEGER),
		durationS: required(DOUBLE),
		channels: required(DataTypes.ARRAY(TEXT), []),
		warnings: required(JSONB, []),
		createdBy: nullable(UUID),
		createdAt: now(),
		forceRawUploadId: nullable(UUID),
		forceFileName: nullable(TEXT),
		forceSha256: nullable(TEXT),
		forceSampleHz: nullable(DOUBLE),
		forcePlates: nullable(DataTypes.ARRAY(TEXT)),
		forceMapping: json('forceMapping', columnMappingSchema, { allowNull: true })
	});
	register(MappingPreset, 'mapping_presets', 'MappingPreset', {
		id: uuidKey(),
		studyId: required(UUID),
		name: required(TEXT),
		mapping: json('mapping', columnMappingSchema, { allowNull: false }),
		createdBy: nullable(UUID),
		createdAt: now()
	});
	register(Run, 'runs', 'Run', {
		id: uuidKey(),
		trialId: required(UUID),
		state: required(TEXT, 'queued'),
		progress: required(REAL, 0),
		stage: nullable(TEXT),
		options: json('options', storedOptionsSchema, { allowNull: false, defaultValue: {} }),
		model: nullable(JSONB),
		rawSha256: required(TEXT),
		softwareVersion: required(TEXT),
		error: nullable(TEXT),
		attempts: required(INTEGER, 0),
		createdBy: nullable(UUID),
		createdAt: now(),
		startedAt: nullable(DATE),
		finishedAt: nullable(DATE),
		summary: json('summary', storedSummarySchema, { allowNull: true }),
		edgeZone: json('edgeZone', storedEdgeZoneSchema, { allowNull: true }),
		flaggedReason: nullable(TEXT),
		flagDecision: nullable(TEXT),
		flagDecidedBy: nullable(UUID),
		flagDecidedAt: nullable(DATE),
		jobId: nullable(UUID)
	});
	register(RunSeries, 'run_series', 'RunSeries', {
		runId: keyPart(UUID),
		name: keyPart(TEXT),
		quantity: keyPart(TEXT),
		unit: required(TEXT),
		components: required(INTEGER, 1),
		data: required(BLOB)
	});
	register(CycleEvent, 'cycle_events', 'CycleEvent', {
		id: uuidKey(),
		runId: unique(UUID),
		times: required(DataTypes.ARRAY(DOUBLE)),
		source: required(TEXT),
		rule: json('rule', z.record(z.string(), z.unknown()), { allowNull: true }),
		createdBy: nullable(UUID),
		createdAt: now(),
		updatedAt: now()
	});

	register(RunGait, 'run_gait', 'RunGait', {
		runId: keyPart(UUID),
		forces: json('forces', storedForcesSchema, { allowNull: false }),
		contacts: json('contacts', z.array(contactViewSchema), { allowNull: false }),
		events: json('events', z.array(eventViewSchema), { allowNull: false }),
		cycles: json('cycles', z.array(cycleViewSchema), { allowNull: false }),
		spatiotemporal: json('spatiotemporal', storedSpatiotemporalSchema, { allowNull: false }),
		createdAt: now()
	});

	// ---- lab equipment (migration 0010)
	register(ForcePlate, 'force_plates', 'ForcePlate', {
		id: uuidKey(),
		labId: required(INTEGER),
		name: required(TEXT),
		corners: json('corners', forcePlateSchema.shape.corners, { allowNull: false }),
		axes: json('axes', forcePlateSchema.shape.axes, { allowNull: false }),
		originDepthM: required(DOUBLE),
		output: required(TEXT),
		createdAt: now(),
		updatedAt: now(),
		archivedAt: nullable(DATE)
	});
}
