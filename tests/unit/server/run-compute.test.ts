// The storage boundary: a run's rows are only written when every number in them is finite.
import { describe, expect, it } from 'vitest';
import { assertStorable, computeRun } from '../../../src/lib/server/runs/compute';
import { NonFiniteResultError } from '../../../src/lib/processing/pipeline';
import { runOptionsSchema } from '../../../src/lib/processing/pipeline';
import { buildSessionModel, type SessionSetup } from '../../../src/lib/processing/session-model';
import { makeRecording } from '../processing/helpers';

const body = { sex: 'female' as const, bodyMass: 64, stature: 1.68 };
const setup: SessionSetup = { table: 'de-leva-1996', limbs: ['right.leg'], bases: {}, loads: [], gravity: [0, -9.81, 0] };
const built = buildSessionModel(body, setup);
const recording = () => makeRecording(built, 301, 100, (n, t) => (n === 'right.knee.flexion' ? 0.6 + 0.4 * Math.sin(Math.PI * t) : 0));

describe('assertStorable (called by writeResults before anything is written)', () => {
	it('passes a computed run whose every number is finite', () => {
		const c = computeRun(body, setup, recording(), runOptionsSchema.parse({}));
		expect(() => assertStorable(c)).not.toThrow();
	});

	it('refuses a series holding a non-finite sample, naming quantity, DOF or joint and the sample time', () => {
		const c = computeRun(body, setup, recording(), runOptionsSchema.parse({}));
		const moment = c.series.find((s) => s.quantity === 'moment' && s.name === 'right.knee.flexion')!;
		new Float64Array(moment.data.buffer, moment.data.byteOffset, moment.data.byteLength / 8)[42] = Infinity;
		expect(() => assertStorable(c)).toThrow(NonFiniteResultError);
		expect(() => assertStorable(c)).toThrow(/the moment of right\.knee\.flexion at 0\.42 s \(sample 43\) is Infinity/);
		const c2 = computeRun(body, setup, recording(), runOptionsSchema.parse({}));
		const force = c2.series.find((s) => s.quantity === 'reaction_force')!;
		new Float64Array(force.data.buffer, force.data.byteOffset, force.data.byteLength / 8)[3 * 5 + 1] = NaN;
		expect(() => assertStorable(c2)).toThrow(
			new RegExp(`the reaction force \\(y\\) of ${force.name.replace(/\./g, '\\.')} at 0\\.05 s \\(sample 6\\) is NaN`)
		);
	});

	it('refuses a summary figure that is not finite (null in JSON), but not a part with no samples', () => {
		const c = computeRun(body, setup, recording(), runOptionsSchema.parse({}));
		const row = c.summary[0];
		expect(() => assertStorable({ ...c, summary: [{ ...row, mean: NaN }] })).toThrow(
			new RegExp(`summary's mean of the ${row.quantity} of ${row.dof.replace(/\./g, '\\.')} is NaN`)
		);
		expect(() => assertStorable({ ...c, summary: [{ ...row, wholeTrial: { ...row.wholeTrial, peakPositive: -Infinity } }] })).toThrow(
			/peakPositive \(whole trial\)/
		);
		const empty = {
			...row,
			peakPositive: NaN,
			peakPositiveTime: NaN,
			peakNegative: NaN,
			peakNegativeTime: NaN,
			range: NaN,
			mean: NaN,
			samples: 0
		};
		expect(() => assertStorable({ ...c, summary: [empty] })).not.toThrow();
	});

	it('the pipeline already refuses the same results: computeRun throws for gravity of 1e308 m/s²', () => {
		expect(() => computeRun(body, setup, recording(), runOptionsSchema.parse({ gravity: [0, -1e308, 0] }))).toThrow(NonFiniteResultError);
	});
});
