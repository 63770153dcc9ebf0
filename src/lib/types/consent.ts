// What the consent pages receive from the server: one definition for both sides (no server imports here).

export type ConsentState = 'not_invited' | 'invited' | 'consented' | 'declined' | 'withdrawn' | 'expired';

export const CONSENT_STATES: readonly ConsentState[] = ['not_invited', 'invited', 'consented', 'declined', 'withdrawn', 'expired'];

/** Words for each state, as people see them. */
export const CONSENT_STATE_LABEL: Record<ConsentState, string> = {
	not_invited: 'not invited',
	invited: 'invited',
	consented: 'consented',
	declined: 'declined',
	withdrawn: 'withdrawn',
	expired: 'invitation expired'
};

export type LinkPurpose = 'consent' | 'withdraw';
export type LinkKind = 'invitation' | 'resend' | 'reminder' | 'confirmation' | 'seed';

/** Why a link cannot be used: kept for the audit log and to choose the calm wording of the page. */
export type LinkRefusal = 'unknown' | 'wrong-purpose' | 'used' | 'expired' | 'superseded';

export interface StudyContact {
	studyId: string;
	studyCode: string;
	title: string;
	ethicsReference: string | null;
	labName: string | null;
	/** The principal investigator: whom to contact with questions. */
	contactName: string | null;
	contactEmail: string | null;
}

export interface ConsentEventView {
	at: string;
	from: ConsentState;
	to: ConsentState;
	actor: string;
	formVersion: number | null;
	note: string | null;
}

export interface LinkView {
	kind: LinkKind;
	purpose: LinkPurpose;
	createdAt: string;
	sentAt: string | null;
	expiresAt: string | null;
	status: 'open' | 'used' | 'expired' | 'superseded';
	mailError: string | null;
}

/** What the participant sees when a link cannot be used: why, in calm words, and whom to ask. */
export interface RefusedLink {
	refused: LinkRefusal | 'decided';
	state?: ConsentState;
	contact: StudyContact | null;
}

/** The page a consent link opens. */
export interface ConsentPage {
	participantId: string;
	contact: StudyContact;
	form: { id: string; version: number; html: string; confirmations: string[] };
	expiresAt: string;
	today: string;
}

/** The page a withdrawal link opens. */
export interface WithdrawPage {
	contact: StudyContact;
	state: ConsentState;
	/** What the button records: a withdrawal of given consent, or (before consenting) a decline. */
	effect: 'withdraw' | 'decline' | 'nothing';
}

/** One published version of a study's consent form, as the consent-forms page lists it. */
export interface ConsentVersionView {
	id: string;
	version: number;
	bodyMarkdown: string;
	bodyHtml: string;
	confirmations: string[];
	publishedAt: string;
}
