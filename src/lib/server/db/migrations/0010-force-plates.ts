// Force plates as lab equipment: each plate's top-surface corners and axes in lab axes, the depth of its measuring
// origin and what it outputs (the ForcePlate of src/lib/processing/forces/plate.ts). Plates that runs used are
// archived, never deleted; a name is unique among a lab's plates in use (it is the column prefix in recordings), so an
// archived plate's name may be given to its replacement.
import { DataTypes } from 'sequelize';
import type { Migration } from './types';

export const up: Migration = async ({ context: qi }) => {
	const now = qi.sequelize.fn('now');
	const q = (sql: string) => qi.sequelize.query(sql);
	await qi.createTable('force_plates', {
		id: { type: DataTypes.UUID, primaryKey: true, defaultValue: qi.sequelize.literal('gen_random_uuid()') },
		lab_id: { type: DataTypes.INTEGER, allowNull: false, references: { model: 'labs', key: 'id' }, onDelete: 'RESTRICT' },
		name: { type: DataTypes.TEXT, allowNull: false },
		/** four [X, Y, Z] corners of the top surface in lab axes (m), going round the plate */
		corners: { type: DataTypes.JSONB, allowNull: false },
		/** R_plate→lab, row-major 3×3 (column k = plate axis k in lab axes) */
		axes: { type: DataTypes.JSONB, allowNull: false },
		origin_depth_m: { type: DataTypes.DOUBLE, allowNull: false },
		output: { type: DataTypes.TEXT, allowNull: false },
		created_at: { type: DataTypes.DATE, allowNull: false, defaultValue: now },
		updated_at: { type: DataTypes.DATE, allowNull: false, defaultValue: now },
		archived_at: { type: DataTypes.DATE, allowNull: true }
	});
	await q(`ALTER TABLE force_plates ADD CONSTRAINT force_plates_output CHECK (output IN ('forces-cop', 'forces-moments'))`);
	await q(`ALTER TABLE force_plates ADD CONSTRAINT force_plates_depth CHECK (origin_depth_m >= 0)`);
	await q(`CREATE UNIQUE INDEX force_plates_name_in_use ON force_plates (lab_id, name) WHERE archived_at IS NULL`);
};

export const down: Migration = async ({ context: qi }) => {
	await qi.dropTable('force_plates');
};
