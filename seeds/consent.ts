// Demo consent states from seeds/demo/consent.json, written as the workflow would (records, history), once per participant.
import fs from 'node:fs';
import path from 'node:path';
import { randomBytes } from 'node:crypto';
import { fileURLToPath } from 'node:url';
import { QueryTypes, type Sequelize, type Transaction } from 'sequelize';
import { z } from 'zod';
import { hashToken } from '../src/lib/server/auth/tokens';
import { CONSENT_LINK_LIFETIME_MS } from '../src/lib/server/consent/links';

const here = path.dirname(fileURLToPath(import.meta.url));
const day = z.string().regex(/^\d{4}-\d{2}-\d{2}$/);
const consentFile = z.object({
	participants: z.record(
		z.string(),
		z.discriminatedUnion('state', [
			z.object({ state: z.literal('invited') }),
			z.object({ state: z.literal('consented'), invitedOn: day, decidedOn: day }),
			z.object({ state: z.literal('withdrawn'), invitedOn: day, decidedOn: day, withdrawnOn: day })
		])
	)
});

/** Seeds the consent states of participants that have none yet; returns what it created. */
export async function seedConsent(sequelize: Sequelize, transaction: Transaction): Promise<string[]> {
	const parsed = consentFile.safeParse(JSON.parse(fs.readFileSync(path.join(here, 'demo', 'consent.json'), 'utf8')));
	if (!parsed.success)
		throw new Error(`seeds/demo/consent.json: ${parsed.error.issues.map((i) => `${i.path.join('.')}: ${i.message}`).join('; ')}`);
	const created: string[] = [];
	const q = <T extends object>(sql: string, replacements: Record<string, unknown>) =>
		sequelize.query<T>(sql, { replacements, type: QueryTypes.SELECT, transaction });
	const exec = (sql: string, replacements: Record<string, unknown>) => sequelize.query(sql, { replacements, transaction });
	for (const [code, c] of Object.entries(parsed.data.participants)) {
		const [p] = await q<{ id: string; study_id: string; consent_state: string; full_name: string | null }>(
			`SELECT p.id, p.study_id, p.consent_state, pp.full_name FROM participants p LEFT JOIN participant_personal pp ON pp.participant_id = p.id WHERE p.code = :code`,
			{ code }
		);
		if (!p) throw new Error(`seeds/demo/consent.json: no participant ${code}`);
		const [{ n }] = await q<{ n: number }>(`SELECT count(*)::int AS n FROM consent_events WHERE participant_id = :id`, { id: p.id });
		// existing consent data is never touched
		if (p.consent_state !== 'not_invited' || n > 0) continue;
		const [form] = await q<{ id: string; version: number; confirmations: string[] }>(
			`SELECT id, version, confirmations FROM consent_form_versions WHERE study_id = :studyId AND version = 1`,
			{ studyId: p.study_id }
		);
		if (!form) throw new Error(`seeds/demo/consent.json: the study of ${code} has no consent form version 1`);
		const event = (from: string, to: string, at: Date, actor: string, note: string) =>
			exec(
				`INSERT INTO consent_events (participant_id, from_state, to_state, at, actor_label, form_version, note) VALUES (:id, :from, :to, :at, :actor, :version, :note)`,
				{
					id: p.id,
					from,
					to,
					at,
					actor,
					version: form.version,
					note
				}
			);
		const link = (purpose: 'consent' | 'withdraw', at: Date, used: Date | null) =>
			q<{ id: string }>(
				`INSERT INTO consent_invitations (participant_id, form_version_id, purpose, kind, token_hash, expires_at, used_at, sent_at, created_at)
				 VALUES (:id, :fv, :purpose, 'seed', :hash, :expires, :used, :at, :at) RETURNING id`,
				// the clear-text token is thrown away: demo links are not meant to be opened
				{
					id: p.id,
					fv: form.id,
					purpose,
					hash: hashToken(randomBytes(32).toString('base64url')),
					expires: purpose === 'consent' ? new Date(at.getTime() + CONSENT_LINK_LIFETIME_MS) : null,
					used,
					at
				}
			);
		let state: string;
		let since: Date;
		if (c.state === 'invited') {
			since = new Date();
			await link('consent', since, null);
			await link('withdraw', since, null);
			await event('not_invited', 'invited', since, 'seed', 'Invitation sent (form version 1).');
			state = 'invited';
		} else {
			const invited = new Date(`${c.invitedOn}T09:00:00Z`);
			const decided = new Date(`${c.decidedOn}T18:30:00Z`);
			const [consentLink] = await link('consent', invited, decided);
			await link('withdraw', invited, c.state === 'withdrawn' ? new Date(`${c.withdrawnOn}T10:00:00Z`) : null);
			await event('not_invited', 'invited', invited, 'seed', 'Invitation sent (form version 1).');
			const [rec] = await q<{ id: string }>(
				`INSERT INTO consent_records (participant_id, decision, form_version_id, confirmations, signed_on, decided_at, invitation_id) VALUES (:id, 'consented', :fv, :conf::jsonb, :on, :at, :link) RETURNING id`,
				{ id: p.id, fv: form.id, conf: JSON.stringify(form.confirmations), on: c.decidedOn, at: decided, link: consentLink.id }
			);
			await exec(`INSERT INTO consent_signatures (record_id, typed_name) VALUES (:id, :name)`, { id: rec.id, name: p.full_name ?? code });
			await event(
				'invited',
				'consented',
				decided,
				'participant (e-mailed link)',
				`Consent given under form version 1, signed ${c.decidedOn}.`
			);
			state = 'consented';
			since = decided;
			if (c.state === 'withdrawn') {
				since = new Date(`${c.withdrawnOn}T10:00:00Z`);
				await exec(
					`INSERT INTO consent_records (participant_id, decision, form_version_id, decided_at) VALUES (:id, 'withdrawn', :fv, :at)`,
					{ id: p.id, fv: form.id, at: since }
				);
				await event('consented', 'withdrawn', since, 'participant (e-mailed link)', 'Consent withdrawn.');
				state = 'withdrawn';
			}
		}
		await exec(
			`UPDATE participants SET consent_state = :state, consent_state_since = :since, consent_form_version_id = :fv WHERE id = :id`,
			{ state, since, fv: form.id, id: p.id }
		);
		created.push(`consent ${code}: ${state}`);
	}
	return created;
}
