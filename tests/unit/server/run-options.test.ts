// Run options as a person chooses them in the "New run" form, and as a stored run is read back for a retry.
import { describe, expect, it } from 'vitest';
import { runOptionsFromForm } from '../../../src/lib/server/runs/runs';
import { storedRunOptions } from '../../../src/lib/processing/pipeline';
import { DEFAULT_END_TREATMENT } from '../../../src/lib/processing/edges';

const form = (fields: Record<string, string>) => {
	const f = new FormData();
	for (const [k, v] of Object.entries(fields)) f.set(k, v);
	return f;
};

describe('the end treatment of a run', () => {
	it('is the default when the form does not name one', () => {
		expect(runOptionsFromForm(form({ filter: 'lowpass', cutoffHz: '6' })).endTreatment).toBe(DEFAULT_END_TREATMENT);
	});
	it('is the one chosen in the form', () => {
		expect(runOptionsFromForm(form({ filter: 'lowpass', cutoffHz: '6', endTreatment: 'cubic' })).endTreatment).toBe('cubic');
		expect(runOptionsFromForm(form({ filter: 'none', endTreatment: 'reflect' })).endTreatment).toBe('reflect');
	});
	it('refuses an unknown one with a field message', () => {
		try {
			runOptionsFromForm(form({ filter: 'lowpass', cutoffHz: '6', endTreatment: 'mirror' }));
			expect.unreachable();
		} catch (e) {
			expect((e as { errors: Record<string, string> }).errors.endTreatment).toMatch(/endTreatment must be one of/);
		}
	});
	it('of a run stored before end treatments existed is the 9-sample reflection it was made with', () => {
		const r = storedRunOptions({ cutoffHz: 6, fillGaps: false });
		expect(r.success && r.data.endTreatment).toBe('reflect-9');
		const now = storedRunOptions({ cutoffHz: 6, fillGaps: false, endTreatment: 'prediction' });
		expect(now.success && now.data.endTreatment).toBe('prediction');
	});
});

describe('the force options of the form (a trial with a force recording)', () => {
	const f = (extra: Record<string, string>) => runOptionsFromForm(form({ filter: 'lowpass', cutoffHz: '6', ...extra }));
	it('leave the options as they were when the form has no force fields', () => {
		const o = f({});
		expect('forceCutoffHz' in o).toBe(false);
		expect('useFlaggedContacts' in o).toBe(false);
	});
	it('"same as the angles" leaves forceCutoffHz out (then the angles’ cutoff applies); none is null; another is its number', () => {
		const same = f({ forceCutoff: 'same' });
		expect('forceCutoffHz' in same).toBe(false);
		expect(same.useFlaggedContacts).toBe(false);
		expect(f({ forceCutoff: 'none', useFlaggedContacts: 'on' })).toMatchObject({ forceCutoffHz: null, useFlaggedContacts: true });
		expect(f({ forceCutoff: 'custom', forceCutoffHz: '12' }).forceCutoffHz).toBe(12);
	});
	it('refuse another cutoff left empty, under its field', () => {
		try {
			f({ forceCutoff: 'custom', forceCutoffHz: '' });
			expect.unreachable();
		} catch (e) {
			expect((e as { errors: Record<string, string> }).errors.forceCutoffHz).toMatch(/cutoff for the forces in Hz/);
		}
	});
});
