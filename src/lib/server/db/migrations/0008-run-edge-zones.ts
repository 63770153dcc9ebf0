// Each run's edge zone: the stretch at each end of the trial where filtered and differentiated angles, hence joint
// moments, are not reliable (src/lib/processing/pipeline.ts, EdgeZone). Written with the results; NULL for runs
// computed before edge zones existed (shown as "not computed" and treated as zero) and for runs without results.
import { DataTypes } from 'sequelize';
import type { Migration } from './types';

export const up: Migration = async ({ context: qi }) => {
	await qi.addColumn('runs', 'edge_zone', { type: DataTypes.JSONB, allowNull: true });
	await qi.sequelize.query(
		`ALTER TABLE runs ADD CONSTRAINT runs_edge_zone_shape CHECK (edge_zone IS NULL OR (
			jsonb_typeof(edge_zone) = 'object'
			AND jsonb_typeof(edge_zone->'startSamples') = 'number' AND jsonb_typeof(edge_zone->'endSamples') = 'number'
			AND jsonb_typeof(edge_zone->'startSeconds') = 'number' AND jsonb_typeof(edge_zone->'endSeconds') = 'number'
			AND (edge_zone->>'startSamples')::numeric >= 0 AND (edge_zone->>'endSamples')::numeric >= 0
			AND (edge_zone->>'startSeconds')::numeric >= 0 AND (edge_zone->>'endSeconds')::numeric >= 0))`
	);
};

export const down: Migration = async ({ context: qi }) => {
	await qi.sequelize.query(`ALTER TABLE runs DROP CONSTRAINT IF EXISTS runs_edge_zone_shape`);
	await qi.removeColumn('runs', 'edge_zone');
};
