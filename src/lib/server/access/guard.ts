// The one access check: may this person do this action to a record of that study? Default deny.
import { error, redirect, type RequestEvent } from '@sveltejs/kit';
import { db } from '../db/index';
import { User, StudyMember, type StudyRole } from '../db/models';
import { record } from '../audit/record';

export interface Actor {
	id: string;
	email: string;
	name: string | null;
	isAdmin: boolean;
	/** studyId → role */
	roles: ReadonlyMap<string, StudyRole>;
}

/** Lab-wide actions (no study) and the per-study actions with the roles allowed to do them. */
export const LAB_ACTIONS = ['people.manage', 'audit.read', 'studies.manage'] as const;
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
	db();
	const user = await User.findByPk(userId, { include: [StudyMember] });
	if (!user || user.deactivatedAt || (sessionVersion ?? 0) !== user.sessionVersion) return null;
	const members = (user as unknown as { StudyMembers: StudyMember[] }).StudyMembers ?? [];
	return { id: user.id, email: user.email, name: user.name, isAdmin: user.isAdmin, roles: new Map(members.map((m) => [m.studyId, m.role])) };
}

async function deny(event: RequestEvent, action: string, studyId: string | null, status: 403 | 404): Promise<never> {
	const actor = event.locals.actor;
	await record({
		action: 'access.denied',
		actorUserId: actor?.id ?? null,
		actorLabel: actor?.email ?? 'anonymous',
		outcome: 'denied',
		studyId,
		ipAddress: event.getClientAddress(),
		details: { attempted: action, path: event.url.pathname, method: event.request.method, answered: status }
	});
	error(status, status === 404 ? 'Not found' : 'You do not have permission to do this.');
}

/** Requires a signed-in person: pages redirect to sign-in, API routes answer 401. */
export function requireActor(event: RequestEvent): Actor {
	const actor = event.locals.actor;
	if (actor) return actor;
	if (event.url.pathname.startsWith('/api/')) error(401, 'Sign in first.');
	redirect(303, `/signin?next=${encodeURIComponent(event.url.pathname + event.url.search)}`);
}

/** Guards a lab-wide action (administrators only). */
export async function requireLab(event: RequestEvent, action: LabAction): Promise<Actor> {
	const actor = requireActor(event);
	if (!may(actor, action)) await deny(event, action, null, 403);
	return actor;
}

/**
 * Guards an action on a record of `studyId`. Someone with no role in the study gets 404, so that the
 * record's existence does not leak; a member whose role does not allow it gets 403.
 */
export async function requireStudy(event: RequestEvent, action: StudyAction, studyId: string | null | undefined): Promise<Actor> {
	const actor = requireActor(event);
	if (!studyId || !actor.roles.has(studyId)) await deny(event, action, studyId ?? null, 404);
	if (!may(actor, action, studyId!)) await deny(event, action, studyId!, 403);
	return actor;
}
