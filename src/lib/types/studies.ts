// What the studies pages and the people pages receive about studies and roles: one definition for both sides
// (no server imports here; the StudyMember model takes its role type from here).

export type StudyRole = 'pi' | 'researcher' | 'technician';

export interface StudySummary {
	id: string;
	code: string;
	title: string;
	/** The signed-in person's role, or null (an administrator looking at a study they are not on). */
	role: StudyRole | null;
	roleLabel: string | null;
	teamSize: number;
}

export interface StudyDetail {
	id: string;
	code: string;
	title: string;
	role: StudyRole;
	roleLabel: string;
	ethicsReference: string | null;
	ethicsExpiresOn: string | null;
	defaultTable: string;
	participantCount: number;
	mayEdit: boolean;
	team: { name: string; role: StudyRole; roleLabel: string; isYou: boolean }[];
}

export type EthicsState = 'none' | 'valid' | 'expiring' | 'expired';
