// The one access check: may this person do this action to a record of that study? Default deny.
import { User, Study, StudyMember, type StudyRole } from '../db/models';
import { record } from '../audit/record';
import { forbidden, notFound, unauthenticated } from '../errors';
import type { RequestContext } from './context';

export interface Actor {
	id: string;
	email: string;
	name: string | null;
	isAdmin: boolean;
	/** studyId → role */
	roles: ReadonlyMap<string, StudyRole>;
}

/** Lab-wide actions (no study) and the per-study actions with the roles allowed to do them. */
// equipment.manage: setting up, changing and archiving the lab's force plates (every signed-in person reads them)
export const LAB_ACTIONS = ['people.manage', 'audit.read', 'studies.manage', 'equipment.manage'] as const;
export const STUDY_ACTIONS = {
	'study.read': ['pi', 'researcher', 'technician'],
	'participant.personal.read': ['pi', 'technician'],
	'study.edit': ['pi'],
	'consent.publish': ['pi'],
	'participant.create': ['pi', 'technician'],
	'participant.edit': ['pi', 'technician'],
	'participant.personal.edit': ['pi', 'technician'],
	'participant.import': ['pi', 'technician'],
	// e-mailed consent: sending invitations and reminders; the PI's decision on results after a withdrawal
	'consent.invite': ['pi', 'technician'],
	'consent.decide': ['pi'],
	// sessions, trials (uploads), column-mapping presets and processing runs
	'session.create': ['pi', 'technician'],
	'session.edit': ['pi', 'technician'],
	'trial.upload': ['pi', 'technician'],
	'mapping.preset': ['pi', 'technician'],
	'run.start': ['pi', 'researcher', 'technician'],
	// review workflow: researchers submit, the PI approves, returns or reopens; exports of approved sessions
	'session.submit': ['researcher', 'pi'],
	'session.approve': ['pi'],
	'session.reopen': ['pi'],
	'session.export': ['pi', 'researcher']
} as const satisfies Record<string, readonly StudyRole[]>;
const UUID = /^[0-9a-f]{8}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{4}-[0-9a-f]{12}$/i;
/** Whether a string from a URL or a form is a record id at all (anything else is answered like an unknown id). */
export const isUuid = (s: string | null | undefined): s is string => typeof s === 'string' && UUID.test(s);

export type LabAction = (typeof LAB_ACTIONS)[number];
export type StudyAction = keyof typeof STUDY_ACTIONS;

/** Pure decision, for the UI to hide what a role cannot do (the server still calls the guards below). */
export function may(actor: Actor | null, action: LabAction | StudyAction, studyId?: string): boolean {
	if (!actor) return false;
	if ((LAB_ACTIONS as readonly string[]).includes(action)) return actor.isAdmin;
	if (!studyId) return false;
	const role = actor.roles.get(studyId);
	return role !== undefined && (STUDY_ACTIONS[action as StudyAction] as readonly StudyRole[]).includes(role);
}

/** Loads the signed-in person for this request, or null (no session, deactivated, or signed out everywhere). */
export async function loadActor(userId: string | undefined, sessionVersion: number | undefined): Promise<Actor | null> {
	if (!userId) return null;
	const user = await User.findByPk(userId, { include: [StudyMember] });
	if (!user || user.deactivatedAt || (sessionVersion ?? 0) !== user.sessionVersion) return null;
	const members = user.StudyMembers ?? [];
	return {
		id: user.id,
		email: user.email,
		name: user.name,
		isAdmin: user.isAdmin,
		roles: new Map(members.map((m) => [m.studyId, m.role]))
	};
}

async function deny(
	actor: Actor | null,
	ctx: RequestContext,
	action: string,
	studyId: string | null,
	kind: 'not-found' | 'forbidden'
): Promise<never> {
	await record({
		action: 'access.denied',
		actorUserId: actor?.id ?? null,
		actorLabel: actor?.email ?? 'anonymous',
		outcome: 'denied',
		studyId,
		ipAddress: ctx.ipAddress,
		details: { attempted: action, path: ctx.path, method: ctx.method, answered: kind === 'not-found' ? 404 : 403 }
	});
	throw kind === 'not-found' ? notFound() : forbidden();
}

/** Requires a signed-in person (the edge sends pages to sign-in and answers the API with 401). */
export function requireActor(actor: Actor | null): Actor {
	if (!actor) throw unauthenticated();
	return actor;
}

/** Guards a lab-wide action (administrators only); a denial is audited. */
export async function guardLab(actor: Actor | null, ctx: RequestContext, action: LabAction): Promise<Actor> {
	const a = requireActor(actor);
	if (!may(a, action)) await deny(a, ctx, action, null, 'forbidden');
	return a;
}

/**
 * Guards an action on a record of `studyId`. Someone with no role in the study gets not-found, so that the
 * record's existence does not leak; a member whose role does not allow it gets forbidden. Denials are audited.
 */
export async function guardStudyAction(
	actor: Actor | null,
	ctx: RequestContext,
	action: StudyAction,
	studyId: string | null | undefined
): Promise<Actor> {
	const a = requireActor(actor);
	if (!studyId || !a.roles.has(studyId)) await deny(a, ctx, action, studyId ?? null, 'not-found');
	if (!may(a, action, studyId!)) await deny(a, ctx, action, studyId!, 'forbidden');
	return a;
}

/**
 * Guards an action on the study `rawStudyId` names (as it came in a URL or a form) and loads it. A malformed or
 * unknown id is not-found, like a study the person is not on; denials are audited as in guardStudyAction.
 */
export async function studyFor(
	actor: Actor | null,
	ctx: RequestContext,
	action: StudyAction,
	rawStudyId: string | null | undefined
): Promise<{ actor: Actor; study: Study }> {
	const id = isUuid(rawStudyId) ? rawStudyId.toLowerCase() : null;
	const a = await guardStudyAction(actor, ctx, action, id);
	const study = id ? await Study.findByPk(id) : null;
	if (!study) throw notFound();
	return { actor: a, study };
}
