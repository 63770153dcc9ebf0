// Force recordings with trials and gait results with runs. A trial may carry one force file beside its angle file
// (its raw bytes kept like the angle file's, its name, SHA-256, sampling rate, the plates it holds and the column
// mapping it needed); all six are set together or not at all. A run's results gain three series quantities (the GRF
// on the person per plate, N; the CoP, m; the free moment, N·m, all lab axes, 3 components) and one row of gait
// results (contacts, gait events, cycles, spatiotemporal parameters and how the forces were brought to the angle rate).
import { DataTypes } from 'sequelize';
import type { Migration } from './types';

const OLD_QUANTITIES = `'time', 'angle', 'velocity', 'acceleration', 'moment', 'moment_per_kg', 'power', 'reaction_force'`;

export const up: Migration = async ({ context: qi }) => {
	const now = qi.sequelize.fn('now');
	const q = (sql: string) => qi.sequelize.query(sql);
	await qi.addColumn('trials', 'force_raw_upload_id', {
		type: DataTypes.UUID,
		allowNull: true,
		references: { model: 'raw_uploads', key: 'id' },
		onDelete: 'RESTRICT'
	});
	await qi.addColumn('trials', 'force_file_name', { type: DataTypes.TEXT, allowNull: true });
	await qi.addColumn('trials', 'force_sha256', { type: DataTypes.TEXT, allowNull: true });
	await qi.addColumn('trials', 'force_sample_hz', { type: DataTypes.DOUBLE, allowNull: true });
	await qi.addColumn('trials', 'force_plates', { type: DataTypes.ARRAY(DataTypes.TEXT), allowNull: true });
	await qi.addColumn('trials', 'force_mapping', { type: DataTypes.JSONB, allowNull: true });
	await q(
		`ALTER TABLE trials ADD CONSTRAINT trials_force_file_whole CHECK (
			(force_raw_upload_id IS NULL) = (force_file_name IS NULL) AND (force_raw_upload_id IS NULL) = (force_sha256 IS NULL)
			AND (force_raw_upload_id IS NULL) = (force_sample_hz IS NULL) AND (force_raw_upload_id IS NULL) = (force_plates IS NULL)
			AND (force_raw_upload_id IS NOT NULL OR force_mapping IS NULL))`
	);
	await q(`ALTER TABLE trials ADD CONSTRAINT trials_force_sha256_hex CHECK (force_sha256 ~ '^[0-9a-f]{64}$')`);
	await q(`ALTER TABLE trials ADD CONSTRAINT trials_force_rate CHECK (force_sample_hz > 0)`);
	await q(`ALTER TABLE trials ADD CONSTRAINT trials_force_plates CHECK (cardinality(force_plates) >= 1)`);
	await qi.addIndex('trials', ['force_raw_upload_id']);

	await q(`ALTER TABLE run_series DROP CONSTRAINT run_series_quantity`);
	await q(`ALTER TABLE run_series ADD CONSTRAINT run_series_quantity CHECK (quantity IN (${OLD_QUANTITIES}, 'grf', 'cop', 'free_moment'))`);

	await qi.createTable('run_gait', {
		run_id: { type: DataTypes.UUID, primaryKey: true, references: { model: 'runs', key: 'id' }, onDelete: 'CASCADE' },
		/** the force file, its rate, the ratio to the angle rate, the cutoff and contact threshold used */
		forces: { type: DataTypes.JSONB, allowNull: false },
		/** each plate's contacts: plate, samples, foot, how it was assigned, flags, used or why not */
		contacts: { type: DataTypes.JSONB, allowNull: false },
		/** foot strikes and foot offs: foot, kind, time, sample, source */
		events: { type: DataTypes.JSONB, allowNull: false },
		/** strike-to-strike cycles with stance and swing, and why a cycle is left out */
		cycles: { type: DataTypes.JSONB, allowNull: false },
		/** mean ± SD per foot and how lengths were measured */
		spatiotemporal: { type: DataTypes.JSONB, allowNull: false },
		created_at: { type: DataTypes.DATE, allowNull: false, defaultValue: now }
	});
	for (const c of ['contacts', 'events', 'cycles'])
		await q(`ALTER TABLE run_gait ADD CONSTRAINT run_gait_${c}_array CHECK (jsonb_typeof(${c}) = 'array')`);
};

export const down: Migration = async ({ context: qi }) => {
	const q = (sql: string) => qi.sequelize.query(sql);
	await qi.dropTable('run_gait');
	await q(`DELETE FROM run_series WHERE quantity IN ('grf', 'cop', 'free_moment')`);
	await q(`ALTER TABLE run_series DROP CONSTRAINT run_series_quantity`);
	await q(`ALTER TABLE run_series ADD CONSTRAINT run_series_quantity CHECK (quantity IN (${OLD_QUANTITIES}))`);
	await q(`ALTER TABLE trials DROP CONSTRAINT trials_force_file_whole`);
	for (const c of ['force_mapping', 'force_plates', 'force_sample_hz', 'force_sha256', 'force_file_name', 'force_raw_upload_id'])
		await qi.removeColumn('trials', c);
};
