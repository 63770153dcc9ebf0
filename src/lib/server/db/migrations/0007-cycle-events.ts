// Repetitions of a movement: one current set of event times per run, marked by a researcher or accepted from a
// detection rule. The times cut the run's recording into cycles (cycle k spans times[k]..times[k+1]).
import { DataTypes } from 'sequelize';
import type { Migration } from './types';

export const up: Migration = async ({ context: qi }) => {
	const now = qi.sequelize.fn('now');
	const q = (sql: string) => qi.sequelize.query(sql);
	await qi.createTable('cycle_events', {
		id: { type: DataTypes.UUID, primaryKey: true, defaultValue: qi.sequelize.literal('gen_random_uuid()') },
		run_id: { type: DataTypes.UUID, allowNull: false, unique: true, references: { model: 'runs', key: 'id' }, onDelete: 'CASCADE' },
		/** seconds on the run's time axis, strictly increasing, at least two (one cycle) */
		times: { type: DataTypes.ARRAY(DataTypes.DOUBLE), allowNull: false },
		source: { type: DataTypes.TEXT, allowNull: false },
		/** the detection rule accepted (DOF, kind, threshold …), null for manual marks */
		rule: { type: DataTypes.JSONB, allowNull: true },
		created_by: { type: DataTypes.UUID, allowNull: true, references: { model: 'users', key: 'id' }, onDelete: 'SET NULL' },
		created_at: { type: DataTypes.DATE, allowNull: false, defaultValue: now },
		updated_at: { type: DataTypes.DATE, allowNull: false, defaultValue: now }
	});
	await q(`ALTER TABLE cycle_events ADD CONSTRAINT cycle_events_source CHECK (source IN ('manual', 'peaks', 'threshold'))`);
	await q(`ALTER TABLE cycle_events ADD CONSTRAINT cycle_events_two_or_more CHECK (cardinality(times) >= 2)`);
};

export const down: Migration = async ({ context: qi }) => {
	await qi.dropTable('cycle_events');
};
