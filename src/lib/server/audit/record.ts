// Writes to the append-only audit log; every security- or data-relevant action calls record().
import type { Transaction } from 'sequelize';
import { AuditEvent } from '../db/models';

export interface AuditEntry {
	action: string;
	actorUserId?: string | null;
	/** Human-readable actor: a user's e-mail, "system", "seed", "participant link". */
	actorLabel: string;
	outcome?: 'ok' | 'denied' | 'failed';
	studyId?: string | null;
	recordType?: string | null;
	recordId?: string | null;
	ipAddress?: string | null;
	details?: Record<string, unknown>;
}

/** Appends one event; pass the caller's transaction so the event commits or rolls back with the change. */
export async function record(entry: AuditEntry, transaction?: Transaction): Promise<AuditEvent> {
	return AuditEvent.create(
		{
			action: entry.action,
			actorUserId: entry.actorUserId ?? null,
			actorLabel: entry.actorLabel,
			outcome: entry.outcome ?? 'ok',
			studyId: entry.studyId ?? null,
			recordType: entry.recordType ?? null,
			recordId: entry.recordId ?? null,
			ipAddress: entry.ipAddress ?? null,
			details: entry.details ?? {}
		},
		{ transaction }
	);
}
