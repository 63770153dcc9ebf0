// The demo seed loader: run twice, it leaves exactly one copy of the demo data and changes nothing the second time.
import { expect, it } from 'vitest';
import { Op } from 'sequelize';
import {
	Lab,
	AuditEvent,
	User,
	Study,
	StudyMember,
	Participant,
	ParticipantPersonal,
	ParticipantLength,
	ConsentFormVersion,
	ForcePlate,
	Run,
	RunGait,
	Session,
	Trial
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
	expect(first.created).toEqual(expect.arrayContaining(['force plate plate1', 'force plate plate2']));
	expect(await databaseIsEmpty(database())).toBe(false);

	const second = await loadDemoSeed(database());
	expect(second.created).toEqual([]);
	expect(await Lab.count()).toBe(1);
	expect(await User.count()).toBe(5);
	expect(await Study.count()).toBe(3);
	expect(await StudyMember.count()).toBe(7);
	expect(await Participant.count()).toBe(10);
	expect(await ParticipantPersonal.count()).toBe(10);
	expect(await ParticipantLength.count()).toBe(2);
	expect(await ConsentFormVersion.count()).toBe(3);
	// one session per demo visit: a trial each for the shelf reach and the knee extension, three walks each for WLK-001 and WLK-002
	expect(await Session.count()).toBe(4);
	expect(await Trial.count()).toBe(8);
	expect(await Run.count({ where: { state: 'done' } })).toBe(8);
	// two plates side by side along the walkway (seeds/demo/lab.json), read back through the model's plate schema
	const plates = await ForcePlate.findAll({ order: [['name', 'ASC']] });
	expect(plates.map((p) => [p.name, p.corners[0][0], p.corners[2][0], p.archivedAt])).toEqual([
		['plate1', 1.0, 1.6, null],
		['plate2', 1.6, 2.2, null]
	]);
	// WALK-3: each walk with its force file for both plates and a finished gait run whose two contacts carry the GRF
	const walk = await Study.findOne({ where: { code: 'WALK-3' } });
	expect(walk?.title).toBe('Level walking at three speeds');
	const walks = await Trial.findAll({ where: { forceFileName: { [Op.ne]: null } }, order: [['fileName', 'ASC']] });
	// rates as estimated from the files' time columns (to 1e-9 Hz)
	const hz = (x: number | null) => (x === null ? null : Number(x.toFixed(9)));
	expect(walks.map((t) => [t.fileName, t.forceFileName, hz(t.forceSampleHz), hz(t.sampleHz), t.forcePlates])).toEqual(
		['wlk-001', 'wlk-002'].flatMap((p) =>
			['comfortable', 'fast', 'slow'].map((speed) => [
				`${p}-walk-${speed}.csv`,
				`${p}-walk-${speed}.forces.csv`,
				1000,
				200,
				['plate1', 'plate2']
			])
		)
	);
	const gaits = await RunGait.findAll();
	expect(gaits).toHaveLength(6);
	for (const g of gaits) {
		// default run options: the feet are assigned by the model (the foot under the CoP), none by hand
		const used = g.contacts.filter((c) => c.used);
		expect(used.map((c) => [c.plate, c.foot, c.assignedBy])).toEqual([
			['plate1', 'right', 'model'],
			['plate2', 'left', 'model']
		]);
		expect(g.cycles.length).toBeGreaterThan(0);
	}
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

it('neither changes nor sets up again a plate the lab has edited or archived', async () => {
	await (await ForcePlate.findOne({ where: { name: 'plate1' } }))!.update({ originDepthM: 0.05 });
	await (await ForcePlate.findOne({ where: { name: 'plate2' } }))!.update({ archivedAt: new Date() });
	expect((await loadDemoSeed(database())).created).toEqual([]);
	expect(await ForcePlate.count()).toBe(2);
	expect((await ForcePlate.findOne({ where: { name: 'plate1' } }))?.originDepthM).toBe(0.05);
});
