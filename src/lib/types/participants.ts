// What the participant pages receive from the server: one definition for both sides (no server imports here).

export const PAGE_SIZE = 25;
export const SORTS = ['code', 'created', 'mass', 'stature'] as const;
export type Sort = (typeof SORTS)[number];
export type Sex = 'female' | 'male' | 'not reported';

export interface Personal {
	fullName: string | null;
	email: string | null;
	phone: string | null;
}

export interface ParticipantRow {
	id: string;
	code: string;
	sex: Sex;
	birthYear: number | null;
	bodyMassKg: number;
	statureM: number;
	createdOn: string;
	/** Present only for roles that may read personal data. */
	personal?: Personal;
}

export interface ListQuery {
	q: string;
	sort: Sort;
	dir: 'asc' | 'desc';
	page: number;
}

/** One measured segment length; `latest` marks the one scaling uses. */
export interface LengthView {
	id: string;
	segment: string;
	lengthM: number;
	measuredOn: string;
	latest: boolean;
}

/** What the import page shows after a check (and keeps for the import step when the file is fine). */
export interface ImportView {
	fileName: string;
	sizeBytes: number;
	sha256: string;
	delimiter: string;
	columns: string[];
	rows: { row: number; code: string; values: Record<string, string>; problems: string[] }[];
	/** "row 4, column body_mass_kg: …", at most LISTED_PROBLEMS of them. */
	problems: string[];
	problemCount: number;
	ok: boolean;
	firstNumber: number;
	/** The canonical file text, sent back with the import (only when ok). */
	content?: string;
	/** Why the import did not happen although the check had passed. */
	notice?: string;
}
