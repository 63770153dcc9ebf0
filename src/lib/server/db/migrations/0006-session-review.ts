// Session review: the history of every workflow transition (with the approval's signature), and the single-use
// codes e-mailed to a PI without a password so that they can sign an approval.
import { DataTypes } from 'sequelize';
import type { Migration } from './types';

export const up: Migration = async ({ context: qi }) => {
	const now = qi.sequelize.fn('now');
	const uuid = { type: DataTypes.UUID, primaryKey: true, defaultValue: qi.sequelize.literal('gen_random_uuid()') };
	const q = (sql: string) => qi.sequelize.query(sql);

	await qi.createTable('session_transitions', {
		id: uuid,
		session_id: { type: DataTypes.UUID, allowNull: false, references: { model: 'sessions', key: 'id' }, onDelete: 'RESTRICT' },
		from_state: { type: DataTypes.TEXT, allowNull: true },
		to_state: { type: DataTypes.TEXT, allowNull: false },
		actor_user_id: { type: DataTypes.UUID, allowNull: true, references: { model: 'users', key: 'id' }, onDelete: 'SET NULL' },
		/** who, as people read it, kept even if the account is later removed */
		actor_label: { type: DataTypes.TEXT, allowNull: false },
		at: { type: DataTypes.DATE, allowNull: false, defaultValue: now },
		/** the submitter's summary, the PI's comment on a return, or the reason for a reopen */
		note: { type: DataTypes.TEXT, allowNull: true },
		signature_meaning: { type: DataTypes.TEXT, allowNull: true },
		signature_method: { type: DataTypes.TEXT, allowNull: true }
	});
	const states = `('draft', 'in_review', 'returned', 'approved')`;
	await q(
		`ALTER TABLE session_transitions ADD CONSTRAINT session_transitions_states CHECK ((from_state IS NULL OR from_state IN ${states}) AND to_state IN ${states})`
	);
	await q(
		`ALTER TABLE session_transitions ADD CONSTRAINT session_transitions_method CHECK (signature_method IS NULL OR signature_method IN ('password', 'email_code'))`
	);
	// an approval is always signed, and only an approval carries a signature
	await q(
		`ALTER TABLE session_transitions ADD CONSTRAINT session_transitions_signed CHECK ((to_state = 'approved') = (signature_meaning IS NOT NULL AND signature_method IS NOT NULL))`
	);
	await qi.addIndex('session_transitions', ['session_id', 'at']);
	// the history is a record: it is appended to, never changed
	await q(
		`CREATE FUNCTION session_transitions_append_only() RETURNS trigger LANGUAGE plpgsql AS $$ BEGIN RAISE EXCEPTION 'session_transitions is append-only'; END $$`
	);
	await q(
		`CREATE TRIGGER session_transitions_no_change BEFORE UPDATE OR DELETE ON session_transitions FOR EACH ROW EXECUTE FUNCTION session_transitions_append_only()`
	);

	await qi.createTable('signature_codes', {
		id: uuid,
		user_id: { type: DataTypes.UUID, allowNull: false, references: { model: 'users', key: 'id' }, onDelete: 'CASCADE' },
		session_id: { type: DataTypes.UUID, allowNull: false, references: { model: 'sessions', key: 'id' }, onDelete: 'CASCADE' },
		/** sha-256 of the code with the row's salt; the code itself is only in the e-mail */
		code_hash: { type: DataTypes.TEXT, allowNull: false },
		salt: { type: DataTypes.TEXT, allowNull: false },
		expires_at: { type: DataTypes.DATE, allowNull: false },
		used_at: { type: DataTypes.DATE, allowNull: true },
		created_at: { type: DataTypes.DATE, allowNull: false, defaultValue: now }
	});
	await qi.addIndex('signature_codes', ['user_id', 'session_id', 'created_at']);
};

export const down: Migration = async ({ context: qi }) => {
	await qi.dropTable('signature_codes');
	await qi.dropTable('session_transitions');
	await qi.sequelize.query(`DROP FUNCTION IF EXISTS session_transitions_append_only()`);
};
