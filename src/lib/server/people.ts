// People and their accounts: what the account pages and the people pages change, each change audited.
import { db } from './db/index';
import { User } from './db/models';

/** Every session of the account stops working at its next request (they carry the old version number). */
export async function signOutEverywhere(userId: string): Promise<void> {
	db();
	await User.increment('sessionVersion', { where: { id: userId } });
}
