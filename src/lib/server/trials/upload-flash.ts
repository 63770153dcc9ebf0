// The outcome of a plain (no-JavaScript) upload form post, carried to the session page in a short-lived cookie.
import type { FlashOutcome, UploadOutcome } from '../../types/sessions';

export type { FlashOutcome } from '../../types/sessions';

export const flashCookieName = 'momentry-upload';

const MAX_COOKIE = 3600;

/** Keeps the cookie under browsers' 4 kB: fewer problems first, then the suggested mapping, then shorter messages. */
export function encodeFlash(outcomes: UploadOutcome[]): string {
	const enc = (v: FlashOutcome[]) => Buffer.from(JSON.stringify(v)).toString('base64url');
	for (const [nProblems, withSuggested, cut] of [
		[8, true, 400],
		[3, true, 300],
		[3, false, 200],
		[1, false, 120],
		[0, false, 80]
	] as const) {
		const flash: FlashOutcome[] = outcomes.slice(0, 10).map((o) => ({
			fileName: o.fileName.slice(0, 120),
			status: o.status,
			message: o.message.slice(0, cut),
			problems: (o.problems ?? [])
				.slice(0, nProblems)
				.map((p) => ({ code: p.code, message: p.message.slice(0, cut), row: p.row, column: p.column?.slice(0, 60), severity: p.severity })),
			moreProblems: Math.max(0, (o.problems ?? []).length - nProblems),
			...(o.duplicateOf ? { duplicateOf: o.duplicateOf } : {}),
			...(o.pairedWith ? { pairedWith: { role: o.pairedWith.role, fileName: o.pairedWith.fileName.slice(0, 120) } } : {}),
			...(o.needsMapping
				? {
						needsMapping: {
							headers: o.needsMapping.headers.slice(0, 60),
							...(withSuggested ? { suggested: o.needsMapping.suggested } : {})
						}
					}
				: {}),
			...(o.trial ? { trialId: o.trial.id } : {})
		}));
		const v = enc(flash);
		if (v.length <= MAX_COOKIE) return v;
	}
	return enc(
		outcomes.slice(0, 3).map((o) => ({
			fileName: o.fileName.slice(0, 60),
			status: o.status,
			message: o.message.slice(0, 60),
			problems: [],
			moreProblems: o.problems?.length ?? 0
		}))
	);
}

export function decodeFlash(value: string | undefined): FlashOutcome[] | null {
	if (!value) return null;
	try {
		const v = JSON.parse(Buffer.from(value, 'base64url').toString('utf8'));
		return Array.isArray(v) ? (v as FlashOutcome[]) : null;
	} catch {
		return null;
	}
}
