// People, sign-in (Auth.js tables), studies with per-study roles, one-time tokens and failed sign-in records.
import { DataTypes } from 'sequelize';
import type { Migration } from './types';

export const up: Migration = async ({ context: qi }) => {
	const now = qi.sequelize.fn('now');
	const uuid = { type: DataTypes.UUID, primaryKey: true, defaultValue: qi.sequelize.literal('gen_random_uuid()') };
	// users, accounts, sessions, verification_tokens: the columns Auth.js' Sequelize adapter reads and writes
	await qi.createTable('users', {
		id: uuid,
		name: { type: DataTypes.TEXT, allowNull: true },
		email: { type: DataTypes.TEXT, allowNull: false, unique: true },
		email_verified: { type: DataTypes.DATE, allowNull: true },
		image: { type: DataTypes.TEXT, allowNull: true },
		password_hash: { type: DataTypes.TEXT, allowNull: true },
		is_admin: { type: DataTypes.BOOLEAN, allowNull: false, defaultValue: false },
		deactivated_at: { type: DataTypes.DATE, allowNull: true },
		// bumped by "sign out everywhere": sessions that carry an older number stop working
		session_version: { type: DataTypes.INTEGER, allowNull: false, defaultValue: 0 },
		created_at: { type: DataTypes.DATE, allowNull: false, defaultValue: now }
	});
	await qi.sequelize.query(`ALTER TABLE users ADD CONSTRAINT users_email_lower CHECK (email = lower(email))`);
	await qi.createTable('accounts', {
		id: uuid,
		type: { type: DataTypes.TEXT, allowNull: false },
		provider: { type: DataTypes.TEXT, allowNull: false },
		provider_account_id: { type: DataTypes.TEXT, allowNull: false },
		refresh_token: DataTypes.TEXT,
		access_token: DataTypes.TEXT,
		expires_at: DataTypes.INTEGER,
		token_type: DataTypes.TEXT,
		scope: DataTypes.TEXT,
		id_token: DataTypes.TEXT,
		session_state: DataTypes.TEXT,
		user_id: { type: DataTypes.UUID, allowNull: false, references: { model: 'users', key: 'id' }, onDelete: 'CASCADE' }
	});
	await qi.createTable('sessions', {
		id: uuid,
		expires: { type: DataTypes.DATE, allowNull: false },
		session_token: { type: DataTypes.TEXT, allowNull: false, unique: true },
		user_id: { type: DataTypes.UUID, allowNull: false, references: { model: 'users', key: 'id' }, onDelete: 'CASCADE' }
	});
	await qi.createTable('verification_tokens', {
		token: { type: DataTypes.TEXT, primaryKey: true },
		identifier: { type: DataTypes.TEXT, allowNull: false },
		expires: { type: DataTypes.DATE, allowNull: false }
	});

	await qi.createTable('studies', {
		id: uuid,
		code: { type: DataTypes.TEXT, allowNull: false, unique: true },
		title: { type: DataTypes.TEXT, allowNull: false },
		created_at: { type: DataTypes.DATE, allowNull: false, defaultValue: now }
	});
	await qi.createTable('study_members', {
		study_id: { type: DataTypes.UUID, primaryKey: true, references: { model: 'studies', key: 'id' }, onDelete: 'CASCADE' },
		user_id: { type: DataTypes.UUID, primaryKey: true, references: { model: 'users', key: 'id' }, onDelete: 'CASCADE' },
		role: { type: DataTypes.TEXT, allowNull: false },
		created_at: { type: DataTypes.DATE, allowNull: false, defaultValue: now }
	});
	await qi.sequelize.query(
		`ALTER TABLE study_members ADD CONSTRAINT study_members_role CHECK (role IN ('pi', 'researcher', 'technician'))`
	);
	await qi.addIndex('study_members', ['user_id']);

	// single-use e-mailed links of our own (invitations, password resets); only a hash of the token is kept
	await qi.createTable('one_time_tokens', {
		id: uuid,
		purpose: { type: DataTypes.TEXT, allowNull: false },
		token_hash: { type: DataTypes.TEXT, allowNull: false, unique: true },
		user_id: { type: DataTypes.UUID, allowNull: false, references: { model: 'users', key: 'id' }, onDelete: 'CASCADE' },
		expires_at: { type: DataTypes.DATE, allowNull: false },
		used_at: { type: DataTypes.DATE, allowNull: true },
		created_at: { type: DataTypes.DATE, allowNull: false, defaultValue: now }
	});
	await qi.sequelize.query(
		`ALTER TABLE one_time_tokens ADD CONSTRAINT one_time_tokens_purpose CHECK (purpose IN ('invitation', 'password-reset'))`
	);

	await qi.createTable('sign_in_failures', {
		id: { type: DataTypes.BIGINT, primaryKey: true, autoIncrement: true },
		email: { type: DataTypes.TEXT, allowNull: true },
		ip_address: { type: DataTypes.TEXT, allowNull: true },
		occurred_at: { type: DataTypes.DATE, allowNull: false, defaultValue: now }
	});
	await qi.addIndex('sign_in_failures', ['email', 'occurred_at']);
	await qi.addIndex('sign_in_failures', ['ip_address', 'occurred_at']);
};

export const down: Migration = async ({ context: qi }) => {
	for (const t of [
		'sign_in_failures',
		'one_time_tokens',
		'study_members',
		'studies',
		'verification_tokens',
		'sessions',
		'accounts',
		'users'
	]) {
		await qi.dropTable(t);
	}
};
