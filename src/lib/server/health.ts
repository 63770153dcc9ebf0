// System health as reported by /api/health and the status page.
import { ping } from './db/index';

export interface Health {
	status: 'ok' | 'degraded';
	checkedAt: string;
	database: { status: 'up' | 'down'; latencyMs?: number; error?: string };
}

export async function health(): Promise<Health> {
	const checkedAt = new Date().toISOString();
	try {
		const ms = await ping();
		return { status: 'ok', checkedAt, database: { status: 'up', latencyMs: Math.round(ms * 10) / 10 } };
	} catch (err) {
		const e = err as Error & { code?: string; original?: { code?: string } };
		const code = e.original?.code ?? e.code;
		return {
			status: 'degraded',
			checkedAt,
			database: { status: 'down', error: code ? `${code}: ${e.message}` : e.message }
		};
	}
}
