// What the people pages receive from the server: one definition for both sides (no server imports here).
import type { StudyRole } from './studies';

export const PEOPLE_PER_PAGE = 25;
export const PEOPLE_SORTS = ['name', 'email', 'created'] as const;
export type PeopleSort = (typeof PEOPLE_SORTS)[number];

export interface PeopleQuery {
	q: string;
	sort: PeopleSort;
	dir: 'asc' | 'desc';
	page: number;
}

export interface RoleHeld {
	studyId: string;
	code: string;
	title: string;
	role: StudyRole;
}

export interface PersonSummary {
	id: string;
	name: string | null;
	email: string;
	isAdmin: boolean;
	deactivatedAt: Date | null;
	/** Invited, but has neither accepted the invitation nor signed in with a password. */
	invitationPending: boolean;
	createdAt: Date;
	roles: RoleHeld[];
}

export interface PeoplePage {
	query: PeopleQuery;
	people: PersonSummary[];
	total: number;
	pageCount: number;
	perPage: number;
}

/** A study in the role pickers. */
export interface StudyChoice {
	id: string;
	code: string;
	title: string;
}
