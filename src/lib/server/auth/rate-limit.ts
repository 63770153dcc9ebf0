// Failed sign-in limits per account and per address, counted over a sliding window in PostgreSQL.
import { Op } from 'sequelize';
import { SignInFailure } from '../db/models';

export const LIMITS = { windowMinutes: 15, perAccount: 5, perAddress: 20 } as const;

export interface Throttle {
	blocked: boolean;
	/** Minutes until the oldest failure in the window expires (shown to the person). */
	retryAfterMinutes: number;
}

export async function checkThrottle(email: string, ip: string | null): Promise<Throttle> {
	const since = new Date(Date.now() - LIMITS.windowMinutes * 60_000);
	const [byAccount, byAddress] = await Promise.all([
		SignInFailure.findAll({ where: { email, occurredAt: { [Op.gt]: since } }, order: [['occurredAt', 'ASC']], attributes: ['occurredAt'] }),
		ip
			? SignInFailure.findAll({
					where: { ipAddress: ip, occurredAt: { [Op.gt]: since } },
					order: [['occurredAt', 'ASC']],
					attributes: ['occurredAt']
				})
			: Promise.resolve([])
	]);
	const over = byAccount.length >= LIMITS.perAccount ? byAccount : byAddress.length >= LIMITS.perAddress ? byAddress : null;
	if (!over) return { blocked: false, retryAfterMinutes: 0 };
	const oldest = over[over.length - (over === byAccount ? LIMITS.perAccount : LIMITS.perAddress)].occurredAt;
	const ms = oldest.getTime() + LIMITS.windowMinutes * 60_000 - Date.now();
	return { blocked: true, retryAfterMinutes: Math.max(1, Math.ceil(ms / 60_000)) };
}

export async function recordFailure(email: string, ip: string | null): Promise<void> {
	await SignInFailure.create({ email, ipAddress: ip });
}
