// Password hashing with argon2id (@node-rs/argon2), and the rules a new password must meet.
import { hash, verify } from '@node-rs/argon2';

// OWASP's password storage guidance lists argon2id with m = 19 MiB, t = 2, p = 1 as a minimum (from memory).
// algorithm 2 is Argon2id in @node-rs/argon2's Algorithm enum (a const enum, not importable as a value here)
const OPTIONS = { algorithm: 2, memoryCost: 19_456, timeCost: 2, parallelism: 1 } as const;

export function hashPassword(password: string): Promise<string> {
	return hash(password, OPTIONS);
}

export async function verifyPassword(stored: string | null, password: string): Promise<boolean> {
	if (!stored) {
		// spend the same time as a real check, so timing does not tell which accounts have a password
		await hash(password, OPTIONS);
		return false;
	}
	try {
		return await verify(stored, password);
	} catch {
		return false;
	}
}

/** Returns what is wrong with a proposed password, or null. */
export function passwordProblem(password: string): string | null {
	if (password.length < 12) return 'Use at least 12 characters.';
	if (password.length > 200) return 'Use at most 200 characters.';
	return null;
}
