// E-mailed informed consent: the participant's current consent state, the links sent (hashes only), each decision
// with the form version it was given under, the typed name kept apart as personal data, and the append-only history.
import type { Migration } from './types';

const STATES = `'not_invited', 'invited', 'consented', 'declined', 'withdrawn', 'expired'`;

export const up: Migration = async ({ context: qi }) => {
	const q = (sql: string) => qi.sequelize.query(sql);
	await q(`ALTER TABLE participants
		ADD COLUMN consent_state text NOT NULL DEFAULT 'not_invited' CHECK (consent_state IN (${STATES})),
		ADD COLUMN consent_state_since timestamptz NULL,
		ADD COLUMN consent_form_version_id uuid NULL REFERENCES consent_form_versions(id) ON DELETE RESTRICT`);

	// one row per link sent: 'consent' links open the consent page and expire; 'withdraw' links are long-lived
	await q(`CREATE TABLE consent_invitations (
		id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
		participant_id uuid NOT NULL REFERENCES participants(id) ON DELETE CASCADE,
		form_version_id uuid NULL REFERENCES consent_form_versions(id) ON DELETE RESTRICT,
		purpose text NOT NULL CHECK (purpose IN ('consent', 'withdraw')),
		kind text NOT NULL CHECK (kind IN ('invitation', 'resend', 'reminder', 'confirmation', 'seed')),
		token_hash text NOT NULL UNIQUE,
		expires_at timestamptz NULL,
		used_at timestamptz NULL,
		revoked_at timestamptz NULL,
		sent_at timestamptz NULL,
		mail_error text NULL,
		sent_by uuid NULL REFERENCES users(id) ON DELETE SET NULL,
		created_at timestamptz NOT NULL DEFAULT now(),
		CHECK (purpose = 'withdraw' OR expires_at IS NOT NULL)
	)`);
	await q(`CREATE INDEX consent_invitations_participant ON consent_invitations (participant_id, purpose, created_at)`);

	// a decision as given; no names here (see consent_signatures)
	await q(`CREATE TABLE consent_records (
		id uuid PRIMARY KEY DEFAULT gen_random_uuid(),
		participant_id uuid NOT NULL REFERENCES participants(id) ON DELETE CASCADE,
		decision text NOT NULL CHECK (decision IN ('consented', 'declined', 'withdrawn')),
		form_version_id uuid NULL REFERENCES consent_form_versions(id) ON DELETE RESTRICT,
		confirmations jsonb NOT NULL DEFAULT '[]' CHECK (jsonb_typeof(confirmations) = 'array'),
		signed_on date NULL,
		decided_at timestamptz NOT NULL DEFAULT now(),
		invitation_id uuid NULL REFERENCES consent_invitations(id) ON DELETE SET NULL,
		ip_address text NULL
	)`);
	await q(`CREATE INDEX consent_records_participant ON consent_records (participant_id, decided_at)`);

	// personal data: the full name the participant typed; read only for the confirmation e-mail, never shown to staff pages
	await q(`CREATE TABLE consent_signatures (
		record_id uuid PRIMARY KEY REFERENCES consent_records(id) ON DELETE CASCADE,
		typed_name text NOT NULL
	)`);

	await q(`CREATE TABLE consent_events (
		id bigserial PRIMARY KEY,
		participant_id uuid NOT NULL REFERENCES participants(id) ON DELETE CASCADE,
		from_state text NOT NULL CHECK (from_state IN (${STATES})),
		to_state text NOT NULL CHECK (to_state IN (${STATES})),
		at timestamptz NOT NULL DEFAULT now(),
		actor_user_id uuid NULL REFERENCES users(id) ON DELETE SET NULL,
		actor_label text NOT NULL,
		form_version integer NULL,
		note text NULL
	)`);
	await q(`CREATE INDEX consent_events_participant ON consent_events (participant_id, at)`);
	// the history is evidence: changes refused at the database (a participant's deletion still cascades)
	await q(`CREATE FUNCTION consent_events_append_only() RETURNS trigger LANGUAGE plpgsql AS $$
		BEGIN
			RAISE EXCEPTION 'consent_events is append-only (% refused)', TG_OP;
		END $$`);
	await q(
		`CREATE TRIGGER consent_events_no_update BEFORE UPDATE ON consent_events FOR EACH ROW EXECUTE FUNCTION consent_events_append_only()`
	);
};

export const down: Migration = async ({ context: qi }) => {
	const q = (sql: string) => qi.sequelize.query(sql);
	for (const t of ['consent_events', 'consent_signatures', 'consent_records', 'consent_invitations']) await q(`DROP TABLE ${t}`);
	await q(`DROP FUNCTION IF EXISTS consent_events_append_only()`);
	await q(`ALTER TABLE participants DROP COLUMN consent_form_version_id, DROP COLUMN consent_state_since, DROP COLUMN consent_state`);
};
