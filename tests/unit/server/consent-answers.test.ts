// The consent form's answers: every confirmation ticked, a typed name, and a date of today ± 1 day.
import { FormProblem } from '../../../src/lib/server/errors';
import { describe, expect, it } from 'vitest';
import { parseConsentAnswers } from '../../../src/lib/server/consent/workflow';

// what the form posted, by field name (the route passes the form's values)
const form = (fields: Record<string, string>) => ({ ...fields });
const errorsOf = (fn: () => unknown): Record<string, string> => {
	try {
		fn();
	} catch (err) {
		if (err instanceof FormProblem) return err.errors;
		throw err;
	}
	return {};
};
const all = { 'confirm-0': 'yes', 'confirm-1': 'yes', fullName: '  Ada Quernstone ', signedOn: '2026-12-02' };

describe('parseConsentAnswers', () => {
	it('accepts every statement ticked, a name and today, and trims the name', () => {
		expect(parseConsentAnswers(form(all), ['a', 'b'], '2026-12-02')).toEqual({ fullName: 'Ada Quernstone', signedOn: '2026-12-02' });
	});
	it('accepts yesterday and tomorrow (time zones), refuses two days off', () => {
		expect(parseConsentAnswers(form({ ...all, signedOn: '2026-12-01' }), ['a', 'b'], '2026-12-02').signedOn).toBe('2026-12-01');
		expect(parseConsentAnswers(form({ ...all, signedOn: '2026-12-03' }), ['a', 'b'], '2026-12-02').signedOn).toBe('2026-12-03');
		expect(errorsOf(() => parseConsentAnswers(form({ ...all, signedOn: '2026-11-30' }), ['a', 'b'], '2026-12-02')).signedOn).toMatch(
			/today’s date \(2026-12-02\)/
		);
		expect(errorsOf(() => parseConsentAnswers(form({ ...all, signedOn: '2.12.2026' }), ['a', 'b'], '2026-12-02')).signedOn).toMatch(
			/YYYY-MM-DD/
		);
	});
	it('names each unticked statement and a missing name', () => {
		const e = errorsOf(() =>
			parseConsentAnswers(form({ 'confirm-0': 'yes', fullName: ' ', signedOn: '2026-12-02' }), ['a', 'b', 'c'], '2026-12-02')
		);
		expect(Object.keys(e).sort()).toEqual(['confirm-1', 'confirm-2', 'fullName']);
	});
});
