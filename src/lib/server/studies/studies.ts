// Studies as people see them: the list of one's studies and one study's team, each read behind the access check.
import { Participant, Study, StudyMember, User } from '../db/models';
import type { StudyDetail, StudyRole, StudySummary } from '../../types/studies';
import { may, requireActor, studyFor, type Actor } from '../access/guard';
import type { RequestContext } from '../access/context';
import { notFound } from '../errors';

/** The words the UI uses for each role (one name per idea: the stored value stays 'pi', 'researcher', 'technician'). */
export const ROLE_LABELS: Record<StudyRole, string> = {
	pi: 'Principal investigator',
	researcher: 'Researcher',
	technician: 'Technician'
};
const ROLE_ORDER: Record<StudyRole, number> = { pi: 0, researcher: 1, technician: 2 };

export { isUuid } from '../access/guard';

export type { StudySummary, StudyDetail } from '../../types/studies';

/** The studies the person holds a role in, by code; administrators see every study (they manage the list). */
export async function listStudies(who: Actor | null): Promise<{ studies: StudySummary[]; seesAll: boolean }> {
	const actor = requireActor(who);
	const ids = [...actor.roles.keys()];
	if (!actor.isAdmin && ids.length === 0) return { studies: [], seesAll: false };
	const studies = await Study.findAll({
		where: actor.isAdmin ? undefined : { id: ids },
		include: [{ model: StudyMember, attributes: ['userId'] }],
		order: [['code', 'ASC']]
	});
	return {
		seesAll: actor.isAdmin,
		studies: studies.map((s) => {
			const role = actor.roles.get(s.id) ?? null;
			const members = s.StudyMembers ?? [];
			return { id: s.id, code: s.code, title: s.title, role, roleLabel: role ? ROLE_LABELS[role] : null, teamSize: members.length };
		})
	};
}

/**
 * One study with its team. Guarded by studyFor('study.read'): a malformed id, an unknown id and a study the
 * person holds no role in all answer 404 (and are audited), so ids cannot be probed.
 *
 * Administrators get no exception here: a lab administrator manages people and the list of studies, but the study's
 * own pages are the team's (they grow to hold participants, sessions and results), so an administrator who is not
 * on the team gets 404 like anyone else. Team membership stays visible to them through people management.
 */
export async function readStudy(who: Actor | null, ctx: RequestContext, rawStudyId: string): Promise<StudyDetail> {
	// a malformed id is denied like an unknown one before anything is queried (its text stays in the audit row's path)
	const { actor, study: found } = await studyFor(who, ctx, 'study.read', rawStudyId);
	const study = await Study.findByPk(found.id, {
		include: [{ model: StudyMember, include: [{ model: User, attributes: ['id', 'name', 'email'] }] }]
	});
	if (!study) throw notFound();
	const members = study.StudyMembers ?? [];
	const team = members
		.map((m) => ({
			name: m.user?.name ?? m.user?.email ?? 'Unknown person',
			role: m.role,
			roleLabel: ROLE_LABELS[m.role],
			isYou: m.userId === actor.id
		}))
		.sort((a, b) => ROLE_ORDER[a.role] - ROLE_ORDER[b.role] || a.name.localeCompare(b.name));
	const role = actor.roles.get(study.id)!;
	return {
		id: study.id,
		code: study.code,
		title: study.title,
		role,
		roleLabel: ROLE_LABELS[role],
		ethicsReference: study.ethicsReference ?? null,
		ethicsExpiresOn: study.ethicsExpiresOn ?? null,
		defaultTable: study.defaultTable,
		participantCount: await Participant.count({ where: { studyId: study.id } }),
		mayEdit: may(actor, 'study.edit', study.id),
		team
	};
}

/** The person's own roles, with each study's code and title (for the account page). */
export async function rolesOf(actor: Actor): Promise<{ studyId: string; code: string; title: string; roleLabel: string }[]> {
	const ids = [...actor.roles.keys()];
	if (ids.length === 0) return [];
	const studies = await Study.findAll({ where: { id: ids }, order: [['code', 'ASC']] });
	return studies.map((s) => ({ studyId: s.id, code: s.code, title: s.title, roleLabel: ROLE_LABELS[actor.roles.get(s.id)!] }));
}
