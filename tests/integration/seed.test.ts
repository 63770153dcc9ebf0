// The demo seed loader: run twice, it leaves exactly one copy of the demo data and changes nothing the second time.
import { afterAll, beforeAll, expect, it } from 'vitest';
import type { Sequelize } from 'sequelize';
import { db, closeDb } from '../../src/lib/server/db/index';
import { migrateUp } from '../../src/lib/server/db/migrate';
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
import { freshDatabase } from './helpers';

let sequelize: Sequelize;
let drop: () => Promise<void>;

beforeAll(async () => {
	const fresh = await freshDatabase('seed');
	drop = fresh.drop;
	sequelize = db(fresh.url);
	await migrateUp(sequelize);
});
afterAll(async () => {
	await closeDb();
	await drop();
});

it('loads the demo once, however often it runs', async () => {
	expect(await databaseIsEmpty(sequelize)).toBe(true);
	const first = await loadDemoSeed(sequelize);
	expect(first.created).toContain('lab alder-creek');
	expect(first.created).toContain('study SHELF-REACH');
	expect(first.created).toContain('role KNEE-60:researcher for knee.researcher@alder-creek.example');
	expect(await databaseIsEmpty(sequelize)).toBe(false);

	const second = await loadDemoSeed(sequelize);
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
	await loadDemoSeed(sequelize);
	expect((await Lab.findOne({ where: { slug: 'alder-creek' } }))?.name).toBe('Renamed by the lab');
});
