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
}
