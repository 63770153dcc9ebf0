// The id of the queue job that processes a run now (pg-boss job id), kept with the run so that a dead-lettered job
// can be told from a newer one through the queue's API, without reading the queue's own tables. NULL for runs
// queued before it was kept: their first job's id is the run's id.
import { DataTypes } from 'sequelize';
import type { Migration } from './types';

export const up: Migration = async ({ context: qi }) => {
	await qi.addColumn('runs', 'job_id', { type: DataTypes.UUID, allowNull: true });
};

export const down: Migration = async ({ context: qi }) => {
	await qi.removeColumn('runs', 'job_id');
};
