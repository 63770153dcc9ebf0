// Study records: ethics reference and expiry, default segment table, participant codes; consent form versions;
// participants with their research data, personal data kept apart, and measured segment lengths as a history.
import { DataTypes } from 'sequelize';
import type { Migration } from './types';

export const up: Migration = async ({ context: qi }) => {
	const now = qi.sequelize.fn('now');
	const uuid = { type: DataTypes.UUID, primaryKey: true, defaultValue: qi.sequelize.literal('gen_random_uuid()') };
	await qi.addColumn('studies', 'ethics_reference', { type: DataTypes.TEXT, allowNull: true });
	await qi.addColumn('studies', 'ethics_expires_on', { type: DataTypes.DATEONLY, allowNull: true });
	await qi.addColumn('studies', 'default_table', { type: DataTypes.TEXT, allowNull: false, defaultValue: 'de-leva-1996' });
	await qi.addColumn('studies', 'participant_prefix', { type: DataTypes.TEXT, allowNull: true });
	await qi.addColumn('studies', 'next_participant_number', { type: DataTypes.INTEGER, allowNull: false, defaultValue: 1 });
	await qi.sequelize.query(
		`ALTER TABLE studies ADD CONSTRAINT studies_default_table CHECK (default_table IN ('dempster-winter-2009', 'de-leva-1996', 'zatsiorsky-regression-2002'))`
	);

	await qi.createTable('consent_form_versions', {
		id: uuid,
		study_id: { type: DataTypes.UUID, allowNull: false, references: { model: 'studies', key: 'id' }, onDelete: 'CASCADE' },
		version: { type: DataTypes.INTEGER, allowNull: false },
		body_markdown: { type: DataTypes.TEXT, allowNull: false },
		confirmations: { type: DataTypes.JSONB, allowNull: false, defaultValue: [] },
		published_at: { type: DataTypes.DATE, allowNull: false, defaultValue: now },
		published_by: { type: DataTypes.UUID, allowNull: true, references: { model: 'users', key: 'id' }, onDelete: 'SET NULL' }
	});
	await qi.addConstraint('consent_form_versions', {
		type: 'unique',
		fields: ['study_id', 'version'],
		name: 'consent_form_versions_study_version'
	});
	await qi.sequelize.query(
		`ALTER TABLE consent_form_versions ADD CONSTRAINT consent_form_versions_confirmations CHECK (jsonb_typeof(confirmations) = 'array')`
	);

	await qi.createTable('participants', {
		id: uuid,
		study_id: { type: DataTypes.UUID, allowNull: false, references: { model: 'studies', key: 'id' }, onDelete: 'CASCADE' },
		code: { type: DataTypes.TEXT, allowNull: false, unique: true },
		sex: { type: DataTypes.TEXT, allowNull: false },
		birth_year: { type: DataTypes.INTEGER, allowNull: true },
		body_mass_kg: { type: DataTypes.DOUBLE, allowNull: false },
		stature_m: { type: DataTypes.DOUBLE, allowNull: false },
		dominant_side: { type: DataTypes.TEXT, allowNull: true },
		notes: { type: DataTypes.TEXT, allowNull: true },
		created_at: { type: DataTypes.DATE, allowNull: false, defaultValue: now }
	});
	await qi.sequelize.query(`ALTER TABLE participants ADD CONSTRAINT participants_sex CHECK (sex IN ('female', 'male', 'not reported'))`);
	await qi.sequelize.query(
		`ALTER TABLE participants ADD CONSTRAINT participants_dominant_side CHECK (dominant_side IS NULL OR dominant_side IN ('left', 'right'))`
	);
	await qi.addIndex('participants', ['study_id', 'code']);

	await qi.createTable('participant_personal', {
		participant_id: { type: DataTypes.UUID, primaryKey: true, references: { model: 'participants', key: 'id' }, onDelete: 'CASCADE' },
		full_name: { type: DataTypes.TEXT, allowNull: true },
		email: { type: DataTypes.TEXT, allowNull: true },
		phone: { type: DataTypes.TEXT, allowNull: true }
	});

	await qi.createTable('participant_lengths', {
		id: uuid,
		participant_id: { type: DataTypes.UUID, allowNull: false, references: { model: 'participants', key: 'id' }, onDelete: 'CASCADE' },
		segment: { type: DataTypes.TEXT, allowNull: false },
		length_m: { type: DataTypes.DOUBLE, allowNull: false },
		measured_on: { type: DataTypes.DATEONLY, allowNull: false },
		created_at: { type: DataTypes.DATE, allowNull: false, defaultValue: now }
	});
	await qi.addIndex('participant_lengths', ['participant_id', 'segment', 'measured_on']);
};

export const down: Migration = async ({ context: qi }) => {
	for (const t of ['participant_lengths', 'participant_personal', 'participants', 'consent_form_versions']) await qi.dropTable(t);
	await qi.sequelize.query(`ALTER TABLE studies DROP CONSTRAINT studies_default_table`);
	for (const c of ['next_participant_number', 'participant_prefix', 'default_table', 'ethics_expires_on', 'ethics_reference'])
		await qi.removeColumn('studies', c);
};
