// The demo seed loader: run twice, it leaves exactly one copy of the demo data and changes nothing the second time.
import { expect, it } from 'vitest';
import {
	Lab,
	AuditEvent,
	User,
	Study,
	StudyMember,
	Participant,
	ParticipantPersonal,
	ParticipantLength,
	ConsentFormVersion
} from '../../src/lib/server/db/models';
import { databaseIsEmpty, loadDemoSeed } from '../../seeds/index';
import { useMigratedDatabase } from './helpers';

const database = useMigratedDatabase('seed');

it('loads the demo once, however often it runs', async () => {
	expect(await databaseIsEmpty(database())).toBe(true);
	const first = await loadDemoSeed(database());
	expect(first.created).toContain('lab alder-creek');
	expect(first.created).toContain('study SHELF-REACH');
	expect(first.created).toContain('role KNEE-60:researcher for knee.researcher@alder-creek.example');
	expect(await databaseIsEmpty(database())).toBe(false);

	const second = await loadDemoSeed(database());
	expect(second.created).toEqual([]);
	expect(await Lab.count()).toBe(1);
	expect(await User.count()).toBe(5);
	expect(await Study.count()).toBe(2);
	expect(await StudyMember.count()).toBe(5);
	expect(await Participant.count()).toBe(8);
	expect(await ParticipantPersonal.count()).toBe(8);
	expect(await ParticipantLength.count()).toBe(2);
	expect(await ConsentFormVersion.count()).toBe(2);
	const shelf = await Study.findOne({ where: { code: 'SHELF-REACH' } });
	expect(shelf?.participantPrefix).toBe('ALD');
	expect(shelf?.nextParticipantNumber).toBe(6);
	expect((await Lab.findOne())?.name).toBe('Alder Creek Movement Laboratory');
	expect(await AuditEvent.count({ where: { action: 'seed.loaded' } })).toBe(1);
});

it('never overwrites a lab a user has edited', async () => {
	await Lab.update({ name: 'Renamed by the lab' }, { where: { slug: 'alder-creek' } });
	await loadDemoSeed(database());
	expect((await Lab.findOne({ where: { slug: 'alder-creek' } }))?.name).toBe('Renamed by the lab');
});
