// Model registry: every Sequelize model of the app, registered on one connection by initModels().
import {
	DataTypes,
	Model,
	type CreationOptional,
	type InferAttributes,
	type InferCreationAttributes,
	type Sequelize
} from 'sequelize';

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
}

export type StudyRole = 'pi' | 'researcher' | 'technician';

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
