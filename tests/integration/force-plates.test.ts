// The lab's force plates through the page's forms (as a browser without JavaScript posts them): set up, changed and
// archived by a lab administrator, each audited; a refused form names the field, keeps what was typed and stores
// nothing; other people read the plates but cannot change them.
import { describe, expect, it } from 'vitest';
import { browserRequests, useApp } from './app-under-test';

const app = useApp('force_plates');
const http = browserRequests(app);
const PAGE = '/lab/force-plates';

/** A level 0.6 m × 0.4 m plate just past the seeded ones (plate1 X 1.0–1.6, plate2 X 1.6–2.2, Z −0.2…0.2). */
const plateForm = (over: Record<string, string> = {}): Record<string, string> => ({
	name: 'plate3',
	'corners.0.x': '2.2',
	'corners.0.z': '-0.2',
	'corners.1.x': '2.8',
	'corners.1.z': '-0.2',
	'corners.2.x': '2.8',
	'corners.2.z': '0.2',
	'corners.3.x': '2.2',
	'corners.3.z': '0.2',
	surfaceY: '0',
	orientation: 'x-anterior',
	originDepthMm: '35',
	output: 'forces-cop',
	...over
});

const plates = async () =>
	(
		await app.sql.query<{
			id: string;
			name: string;
			corners: number[][];
			axes: number[][];
			origin_depth_m: number;
			output: string;
			archived_at: Date | null;
		}>(`SELECT id, name, corners, axes, origin_depth_m, output, archived_at FROM force_plates ORDER BY created_at, name`)
	).rows;
const audits = async (action: string) =>
	(
		await app.sql.query<{ actor_label: string; record_id: string; details: Record<string, unknown> }>(
			`SELECT actor_label, record_id, details FROM audit_events WHERE action = $1 ORDER BY id`,
			[action]
		)
	).rows;
const post = (action: string, form: Record<string, string>, cookie = app.cookies.admin) => http.post(`${PAGE}?/${action}`, cookie, form);

/** The message shown under a field (FormField's data-testid="error-<name>"), as the page's HTML has it. */
function errorAt(html: string, name: string): string | null {
	const m = new RegExp(`data-testid="error-${name.replace(/\./g, '\\.')}"[^>]*>([^<]*)<`).exec(html);
	return m ? m[1].trim() : null;
}

describe('force plates', () => {
	it('shows the seeded plates in the drawing and the table to every signed-in person; the forms only to administrators', async () => {
		for (const persona of ['admin', 'researcherA', 'memberB'] as const) {
			const res = await http.get(PAGE, app.cookies[persona]);
			expect(res.status, persona).toBe(200);
			const html = await res.text();
			for (const name of ['plate1', 'plate2']) {
				expect(html, persona).toContain(`data-testid="floor-plate-${name}"`);
				expect(html, persona).toContain(`data-testid="plate-row-${name}"`);
			}
			expect(html.includes('action="?/create"'), persona).toBe(persona === 'admin');
		}
		expect((await http.get(PAGE, '')).status).toBe(303);
	});

	it('sets up a plate, stores it in metres and audits it', async () => {
		const before = (await plates()).length;
		const res = await post('create', plateForm());
		expect(res.status).toBe(303);
		expect(res.headers.get('location')).toBe(`${PAGE}?done=created&name=plate3`);
		const rows = await plates();
		expect(rows.length).toBe(before + 1);
		const made = rows.find((r) => r.name === 'plate3')!;
		expect(made.corners).toEqual([
			[2.2, 0, -0.2],
			[2.8, 0, -0.2],
			[2.8, 0, 0.2],
			[2.2, 0, 0.2]
		]);
		// "plate x = lab X, plate y = lab Z, plate z down" as R_plate→lab, row-major (column k = plate axis k)
		expect(made.axes).toEqual([
			[1, 0, 0],
			[0, 0, -1],
			[0, 1, 0]
		]);
		expect(made.origin_depth_m).toBeCloseTo(0.035, 12);
		expect(made.output).toBe('forces-cop');
		const [event] = await audits('force-plate.created');
		expect(event.actor_label).toBe('admin@alder-creek.example');
		expect(event.record_id).toBe(made.id);
		expect(event.details).toMatchObject({ plate: { name: 'plate3', output: 'forces-cop' } });

		const html = await (await http.get(`${PAGE}?done=created&name=plate3`, app.cookies.admin)).text();
		expect(html).toContain('Plate plate3 set up.');
		expect(html).toContain('data-testid="floor-plate-plate3"');
	});

	it('refuses bad plates with a message at each field, keeps what was typed and stores nothing', async () => {
		const before = await plates();
		const cases: [Record<string, string>, string, RegExp][] = [
			[{ 'corners.2.x': '2.9' }, 'corners', /not a rectangle/],
			[{ 'corners.0.x': 'abc' }, 'corners.0.x', /^Corner 1 X must be a/],
			[{ surfaceY: '' }, 'surfaceY', /^Corner 1 Y must be a/],
			[{ name: '3rd plate' }, 'name', /^Name must start with a letter/],
			[{ originDepthMm: '900' }, 'originDepthMm', /^Origin depth must be from 0 to 0.2 m/],
			[{ output: 'volts' }, 'output', /^Output must be/],
			[{ orientation: 'sideways' }, 'axes', /Choose how the plate lies/],
			[
				{
					orientation: 'custom',
					...{ 'axes.0.0': '1', 'axes.0.1': '0', 'axes.0.2': '0', 'axes.1.0': '0', 'axes.1.1': '0', 'axes.1.2': '-1' },
					...{ 'axes.2.0': '0', 'axes.2.1': '1.1', 'axes.2.2': '0' }
				},
				'axes',
				/not orthonormal/
			],
			// a plate's name is the column prefix of its channels: two plates in use cannot share one
			[{ name: 'plate1' }, 'name', /A plate named “plate1” is already in use/]
		];
		for (const [change, field, message] of cases) {
			const res = await post('create', plateForm({ name: 'plate9', ...change }));
			const html = await res.text();
			expect(res.status, field).toBe(change.name === 'plate1' ? 409 : 400);
			expect(html, field).toContain('Nothing was saved. Correct the fields marked below and save again.');
			expect(errorAt(html, field), JSON.stringify(change)).toMatch(message);
			// what was typed comes back
			expect(html).toMatch(new RegExp(`id="plate-name" name="name"[^>]*value="${change.name ?? 'plate9'}"`));
		}
		expect(await plates()).toEqual(before);
		expect(await audits('force-plate.created')).toHaveLength(1);
	});

	it('changes a plate and audits it with before and after', async () => {
		const id = (await plates()).find((r) => r.name === 'plate3')!.id;
		const form = await (await http.get(`${PAGE}?edit=${id}`, app.cookies.admin)).text();
		expect(form).toContain('Edit plate plate3');
		expect(form).toMatch(/id="plate-originDepthMm" name="originDepthMm"[^>]*value="35"/);

		const res = await post('update', plateForm({ id, originDepthMm: '41.5', orientation: 'x-right' }));
		expect(res.status).toBe(303);
		const row = (await plates()).find((r) => r.id === id)!;
		expect(row.origin_depth_m).toBeCloseTo(0.0415, 12);
		expect(row.axes).toEqual([
			[0, -1, 0],
			[0, 0, -1],
			[1, 0, 0]
		]);
		const [event] = await audits('force-plate.changed');
		expect(event.record_id).toBe(id);
		expect(event.details).toMatchObject({ before: { originDepthM: 0.035 }, after: { originDepthM: 0.0415 } });

		// a wrong corner on the edit form: nothing changes
		const bad = await post('update', plateForm({ id, 'corners.1.z': '-0.3' }));
		expect(bad.status).toBe(400);
		expect(errorAt(await bad.text(), 'corners')).toMatch(/rectangle/);
		expect((await plates()).find((r) => r.id === id)).toEqual(row);
		expect(await audits('force-plate.changed')).toHaveLength(1);
	});

	it('archives a plate after confirmation, never deletes it, and frees its name', async () => {
		const id = (await plates()).find((r) => r.name === 'plate3')!.id;
		const panel = await (await http.get(`${PAGE}?archive=${id}`, app.cookies.admin)).text();
		expect(panel).toContain('Archive plate plate3?');

		const unconfirmed = await post('archive', { id });
		expect(unconfirmed.status).toBe(400);
		expect((await plates()).find((r) => r.id === id)!.archived_at).toBeNull();

		const res = await post('archive', { id, confirm: 'yes' });
		expect(res.status).toBe(303);
		expect((await plates()).find((r) => r.id === id)!.archived_at).not.toBeNull();
		expect((await audits('force-plate.archived')).map((e) => e.record_id)).toEqual([id]);

		// an archived plate cannot be changed or archived again
		expect((await post('update', plateForm({ id }))).status).toBe(409);
		expect((await post('archive', { id, confirm: 'yes' })).status).toBe(409);
		// its name may be given to a new plate
		expect((await post('create', plateForm())).status).toBe(303);
		expect((await plates()).filter((r) => r.name === 'plate3')).toHaveLength(2);
		const html = await (await http.get(PAGE, app.cookies.admin)).text();
		expect(html).toContain('data-testid="archived-table"');
	});

	it('refuses changes from anyone but a lab administrator, audits the denial and stores nothing', async () => {
		const before = await plates();
		const denied = (await audits('access.denied')).length;
		const id = before[0].id;
		for (const persona of ['piA', 'researcherA', 'technicianA'] as const) {
			expect((await post('create', plateForm({ name: 'plate8' }), app.cookies[persona])).status, persona).toBe(403);
			expect((await post('update', plateForm({ id, name: 'plate8' }), app.cookies[persona])).status, persona).toBe(403);
			expect((await post('archive', { id, confirm: 'yes' }, app.cookies[persona])).status, persona).toBe(403);
		}
		expect((await post('create', plateForm({ name: 'plate8' }), '')).status).toBe(303);
		expect(await plates()).toEqual(before);
		const events = (await audits('access.denied')).slice(denied);
		expect(events).toHaveLength(9);
		expect(events.every((e) => e.details.attempted === 'equipment.manage')).toBe(true);
	});
});
