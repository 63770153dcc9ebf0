// Answer types of the session pages, the review workflow and the trial upload, shared by the server
// (src/lib/server/sessions, src/lib/server/trials) and the components (no server imports).
import type { ColumnMapping, Problem } from '../processing/recording';
import type { SessionSetup } from '../processing/session-model';

export type SessionState = 'draft' | 'in_review' | 'returned' | 'approved';
export type Transition = 'submit' | 'approve' | 'return' | 'reopen';

/** A session in the participant page's list. */
export interface SessionRow {
	id: string;
	sessionOn: string;
	operator: string;
	task: string;
	state: SessionState;
	limbs: string[];
	trials: number;
}

/** One trial as the session page and the upload answer show it. */
export interface TrialView {
	id: string;
	fileName: string;
	sha256: string;
	frameCount: number;
	sampleHz: number;
	durationS: number;
	channels: string[];
	warnings: { code: string; message: string; row?: number; column?: string }[];
	mapped: boolean;
	createdAt: string;
	/** The force file uploaded with it (its own raw file; the plates whose columns it holds), null without one. */
	force: { fileName: string; sha256: string; sampleHz: number; plates: string[] } | null;
}

/** A saved column mapping of a study. */
export interface PresetView {
	id: string;
	name: string;
	mapping: ColumnMapping;
	createdAt: string;
}

/** What the session form offers to choose from. */
export interface SessionFormChoices {
	limbs: readonly string[];
	tables: { id: string; title: string }[];
	baseChoices: readonly string[];
	loadSegments: readonly string[];
	loadRows: number;
	/** The gait set-up (both legs on one moving pelvis): its columns, the default hip width's rule, the accepted range (mm). */
	pelvis: { columns: readonly string[]; hipWidthSource: string; hipWidthMm: { min: number; max: number } };
}

/** The session form's fields as the page shows them again (limbs is the one list). */
export type SessionFormValues = Record<string, string | string[]>;

/** What the new-session and edit pages load. */
export interface SessionFormPage {
	study: { id: string; code: string; title: string; defaultTable: string };
	participant: { id: string; code: string };
	choices: SessionFormChoices;
}

/** The session page's record of the session. */
export interface SessionPageSession {
	id: string;
	sessionOn: string;
	operator: string;
	task: string;
	conditions: string | null;
	state: SessionState;
	setup: SessionSetup;
	tableTitle: string;
	createdAt: string;
}

/** One step in a session's history, oldest first. */
export interface HistoryRow {
	at: string;
	from: string | null;
	to: string;
	actorName: string;
	note: string | null;
	meaning: string | null;
	method: string | null;
}

export interface ApprovalView {
	approvedAt: string;
	approverName: string;
	meaning: string;
}

/** The session page's workflow block. */
export interface WorkflowView {
	state: SessionState;
	locked: boolean;
	history: HistoryRow[];
	approval: ApprovalView | null;
	doneRuns: number;
	meaning: string;
	hasPassword: boolean;
	codeExpiresAt: string | null;
	may: Record<Transition, boolean>;
	noteMin: number;
	noteMax: number;
}

/** A session waiting for the signed-in person. */
export interface WorkRow {
	studyId: string;
	studyCode: string;
	sessionId: string;
	participantCode: string;
	sessionOn: string;
	state: SessionState;
	/** why it is waiting for this person */
	why: string;
}

export interface WorkQueues {
	approve: WorkRow[];
	returned: WorkRow[];
	recordings: WorkRow[];
	/** which queues apply to the person (by the roles they hold) */
	roles: { pi: boolean; researcher: boolean; technician: boolean };
	total: number;
}

export type UploadStatus = 201 | 400 | 409 | 413 | 422;

/** The outcome of one uploaded file. */
export interface UploadOutcome {
	fileName: string;
	status: UploadStatus;
	/** One sentence for the person: what happened, what to do. */
	message: string;
	trial?: TrialView;
	duplicateOf?: { trialId: string; fileName: string; uploadedAt: string };
	problems?: Problem[];
	needsMapping?: { headers: string[]; suggested: ColumnMapping };
	/** Set when a mapping preset was saved with this file. */
	presetSaved?: { id: string; name: string };
	byteSize?: number;
	sha256?: string;
	/** For a force file: the angle file it was paired with (stored or refused together); for an angle file: its force file. */
	pairedWith?: { role: 'angle' | 'force'; fileName: string };
}

/** What the session page shows of one file's outcome after a plain form post. */
export interface FlashOutcome {
	fileName: string;
	status: number;
	message: string;
	problems: { code: string; message: string; row?: number; column?: string; severity: string }[];
	moreProblems: number;
	duplicateOf?: { trialId: string; fileName: string; uploadedAt: string };
	needsMapping?: { headers: string[]; suggested?: ColumnMapping };
	trialId?: string;
	/** The file sent with it: its force file (role 'force') or, for a force file, its angle file (role 'angle'). */
	pairedWith?: { role: 'angle' | 'force'; fileName: string };
}

/** A file's outcome as the upload area shows it: an upload answer (UploadOutcome) or one carried in the cookie (FlashOutcome). */
export type ShownOutcome = Omit<FlashOutcome, 'problems' | 'moreProblems' | 'trialId'> & {
	problems?: FlashOutcome['problems'];
	moreProblems?: number;
};
export type ShownProblem = FlashOutcome['problems'][number];
