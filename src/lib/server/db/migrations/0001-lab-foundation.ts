// First migration: the lab table and the append-only audit log every later feature writes to.
import { DataTypes } from 'sequelize';
import type { Migration } from './types';

export const up: Migration = async ({ context: qi }) => {
	await qi.createTable('labs', {
		id: { type: DataTypes.INTEGER, primaryKey: true, autoIncrement: true },
		slug: { type: DataTypes.TEXT, allowNull: false, unique: true },
		name: { type: DataTypes.TEXT, allowNull: false },
		institution: { type: DataTypes.TEXT, allowNull: false },
		created_at: { type: DataTypes.DATE, allowNull: false, defaultValue: qi.sequelize.fn('now') }
	});

	await qi.createTable('audit_events', {
		id: { type: DataTypes.BIGINT, primaryKey: true, autoIncrement: true },
		occurred_at: { type: DataTypes.DATE, allowNull: false, defaultValue: qi.sequelize.fn('now') },
		actor_user_id: { type: DataTypes.TEXT, allowNull: true },
		actor_label: { type: DataTypes.TEXT, allowNull: false },
		action: { type: DataTypes.TEXT, allowNull: false },
		outcome: { type: DataTypes.TEXT, allowNull: false, defaultValue: 'ok' },
		study_id: { type: DataTypes.TEXT, allowNull: true },
		record_type: { type: DataTypes.TEXT, allowNull: true },
		record_id: { type: DataTypes.TEXT, allowNull: true },
		ip_address: { type: DataTypes.TEXT, allowNull: true },
		details: { type: DataTypes.JSONB, allowNull: false, defaultValue: {} }
	});
	await qi.sequelize.query(
		`ALTER TABLE audit_events ADD CONSTRAINT audit_events_outcome_check CHECK (outcome IN ('ok', 'denied', 'failed'))`
	);
	await qi.addIndex('audit_events', ['occurred_at']);
	await qi.addIndex('audit_events', ['study_id', 'occurred_at']);
	await qi.addIndex('audit_events', ['action']);

	// The audit log is evidence: refuse UPDATE and DELETE at the database, whoever asks.
	await qi.sequelize.query(`
		CREATE FUNCTION audit_events_append_only() RETURNS trigger LANGUAGE plpgsql AS $$
		BEGIN
			RAISE EXCEPTION 'audit_events is append-only (% refused)', TG_OP;
		END $$;
	`);
	await qi.sequelize.query(`
		CREATE TRIGGER audit_events_no_change BEFORE UPDATE OR DELETE ON audit_events
		FOR EACH ROW EXECUTE FUNCTION audit_events_append_only();
	`);
};

export const down: Migration = async ({ context: qi }) => {
	await qi.dropTable('audit_events');
	await qi.sequelize.query('DROP FUNCTION IF EXISTS audit_events_append_only()');
	await qi.dropTable('labs');
};
