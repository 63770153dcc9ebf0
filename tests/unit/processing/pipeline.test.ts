// Pipeline mechanics: progress by stage, summaries and power against closed forms, and precise refusals.
import { describe, expect, it } from 'vitest';
import { buildSessionModel } from '../../../src/lib/processing/session-model';
import {
	assertFiniteResults,
	NonFiniteResultError,
	PipelineError,
	runPipeline,
	runOptionsSchema
} from '../../../src/lib/processing/pipeline';
import { makeRecording } from './helpers';

const person = { sex: 'male' as const, bodyMass: 80, stature: 1.8 };
const built = buildSessionModel(person, { table: 'de-leva-1996', limbs: ['right.leg'] });
// knee: 0.6 + 0.4 sin(2π·0.5 t) over 4 s at 100 Hz; everything else still
const knee = (t: number) => 0.6 + 0.4 * Math.sin(Math.PI * t);
const rec = makeRecording(built, 401, 100, (n, t) => (n === 'right.knee.flexion' ? knee(t) : 0));

describe('runPipeline', () => {
	it('reports progress stage by stage, rising to 1, and times every stage', () => {
		const calls: [number, string][] = [];
		const r = runPipeline(built, rec, {}, (f, s) => calls.push([f, s]));
		const stages = [...new Set(calls.map((c) => c[1]))];
		expect(stages).toEqual(['filter', 'differentiate', 'dynamics', 'summary']);
		for (let i = 1; i < calls.length; i++) expect(calls[i][0]).toBeGreaterThanOrEqual(calls[i - 1][0]);
		expect(calls.at(-1)![0]).toBe(1);
		expect(Object.keys(r.timings)).toEqual(['filter', 'differentiate', 'dynamics', 'summary']);
		expect(r.applied.cutoffHz['right.knee.flexion']).toBe(6);
		expect(r.applied.gravity).toEqual([0, -9.81, 0]);
	});

	it('summarises the angle of a sinusoid: peaks at the quarter periods, range, mean (closed form)', () => {
		const r = runPipeline(built, rec, { cutoffHz: null });
		const row = r.summary.find((s) => s.dof === 'right.knee.flexion' && s.quantity === 'angle')!;
		expect(row.peakPositive).toBeCloseTo(1.0, 12);
		expect(row.peakPositiveTime).toBeCloseTo(0.5, 12);
		expect(row.peakNegative).toBeCloseTo(0.2, 12);
		expect(row.peakNegativeTime).toBeCloseTo(1.5, 12);
		expect(row.range).toBeCloseTo(0.8, 12);
		// mean over 4 whole periods plus one end sample
		expect(row.mean).toBeCloseTo((0.6 * 401 + 0.4 * Math.sin(0)) / 401, 12);
		expect(row.unit).toBe('rad');
		const d = r.dofs.find((x) => x.name === 'right.knee.flexion')!;
		for (let k = 0; k < 401; k += 13) expect(d.power[k]).toBeCloseTo(d.moment[k] * d.velocity[k], 12);
		expect(r.summary.filter((s) => s.dof === 'right.knee.flexion').map((s) => `${s.quantity} ${s.unit}`)).toEqual([
			'moment N·m',
			'angle rad',
			'power W'
		]);
	});

	it('takes per-channel cutoffs and a gravity override', () => {
		const r = runPipeline(built, rec, { cutoffHz: 6, perChannelCutoffHz: { 'right.knee.flexion': 10 }, gravity: [0, 0, 0] });
		expect(r.applied.cutoffHz['right.knee.flexion']).toBe(10);
		expect(r.applied.cutoffHz['right.hip.flexion']).toBe(6);
		const ankle = r.dofs.find((x) => x.name === 'right.ankle.dorsiflexion')!;
		// no gravity and a still ankle: the ankle carries only the foot's share of the knee's motion, far below its static load
		expect(Math.max(...ankle.moment.map(Math.abs))).toBeLessThan(1);
		expect(Math.max(...ankle.moment.map(Math.abs))).toBeGreaterThan(0);
	});

	it('refuses channels that do not match the model, missing samples and impossible cutoffs, naming each', () => {
		const wrong = { ...rec, channels: rec.channels.slice(1) };
		expect(() => runPipeline(built, wrong, {})).toThrow(/has 5 channels; the session model needs 6/);
		const swapped = { ...rec, channels: [rec.channels[1], rec.channels[0], ...rec.channels.slice(2)] };
		expect(() => runPipeline(built, swapped, {})).toThrow(
			/channel 1 is "right.hip.adduction"; the session model expects "right.hip.flexion"/
		);
		const holes = {
			...rec,
			channels: rec.channels.map((c, j) => (j === 3 ? { ...c, values: c.values.map((v, k) => (k === 50 ? NaN : v)) } : c))
		};
		expect(() => runPipeline(built, holes, {})).toThrow(PipelineError);
		expect(() => runPipeline(built, holes, {})).toThrow(/"right.knee.flexion" has 1 missing samples/);
		const filled = runPipeline(built, holes, { fillGaps: true });
		expect(filled.applied.filledGaps).toEqual({ 'right.knee.flexion': 1 });
		expect(() => runPipeline(built, rec, { cutoffHz: 60 })).toThrow(/below half the sampling rate \(50 Hz\)/);
		expect(() => runPipeline(built, rec, { cutoffHz: -1 })).toThrow(/cutoffHz: must be a positive frequency/);
		expect(() => runPipeline(built, rec, { perChannelCutoffHz: { 'right.knee.flex': 8 } })).toThrow(
			/names "right.knee.flex", which is not a channel of this session/
		);
	});

	it('defaults: 6 Hz, no gap filling', () => {
		expect(runOptionsSchema.parse({})).toEqual({ cutoffHz: 6, endTreatment: 'prediction', fillGaps: false });
	});
});

describe('reuseInput (the worker filters its freshly parsed recording in place)', () => {
	it('gives the same series, bit for bit, as filtering into new arrays, with and without a filter', () => {
		for (const cutoffHz of [6, null]) {
			const fresh = () => makeRecording(built, 401, 100, (n, t) => (n === 'right.knee.flexion' ? knee(t) : 0.1 * Math.sin(3 * t)));
			const kept = fresh();
			const before = kept.channels.map((c) => Float64Array.from(c.values));
			const a = runPipeline(built, kept, { cutoffHz });
			const reused = fresh();
			const b = runPipeline(built, reused, { cutoffHz }, undefined, { reuseInput: true });
			// without reuseInput the caller's arrays are untouched
			kept.channels.forEach((c, j) => expect(Array.from(c.values)).toEqual(Array.from(before[j])));
			a.dofs.forEach((d, j) => {
				expect(Array.from(b.dofs[j].angle)).toEqual(Array.from(d.angle));
				expect(Array.from(b.dofs[j].moment)).toEqual(Array.from(d.moment));
			});
			// with it, the recording's arrays became the filtered angles
			expect(b.dofs[0].angle).toBe(reused.channels[0].values);
		}
	});
});

describe('a result that is not a finite number fails the run (NonFiniteResultError)', () => {
	it('an angle spike of 1e200 rad, unfiltered: derivatives and moments overflow; the error names quantity, DOF and first time', () => {
		// 1e200 / dt² (dt = 0.01 s) is 1e204 rad/s², finite; moment × velocity (about 1e204 · 1e202) overflows to ±Infinity (IEEE 754: beyond ~1.8e308)
		const spike = makeRecording(built, 401, 100, (n, t) => (n === 'right.knee.flexion' ? (Math.abs(t - 2) < 1e-9 ? 1e200 : knee(t)) : 0));
		let err: unknown;
		try {
			runPipeline(built, spike, { cutoffHz: null });
		} catch (e) {
			err = e;
		}
		expect(err).toBeInstanceOf(NonFiniteResultError);
		expect(err).toBeInstanceOf(PipelineError);
		// the worker's list of deterministic failures goes by this name: the run fails at once, without retries
		expect((err as Error).name).toBe('PipelineError');
		const at = (err as NonFiniteResultError).at;
		expect(Number.isFinite(at.value)).toBe(false);
		expect((err as Error).message).toContain(
			`the ${at.quantity} of DOF ${at.dof} is ${at.value} at ${Number(at.time.toPrecision(6))} s (sample ${at.sample + 1})`
		);
		expect((err as Error).message).toMatch(/stores nothing/);
		expect(['moment', 'moment per kg', 'power']).toContain(at.quantity);
		// the first sample that overflows lies next to the spike (sample 201, t = 2 s)
		expect(Math.abs(at.time - 2)).toBeLessThanOrEqual(0.01 + 1e-12);
	});

	it('gravity of 1e308 m/s²: every moment overflows from the first sample, named with its time 0 s', () => {
		expect(() => runPipeline(built, rec, { gravity: [0, -1e308, 0] })).toThrow(
			/the moment of DOF right\.hip\.flexion is (-?Infinity|NaN) at 0 s \(sample 1\)/
		);
	});

	it('a NaN that reaches the results (a recording built around the parser) is named too', () => {
		const bad = {
			...rec,
			channels: rec.channels.map((c, j) => (j === 3 ? { ...c, values: c.values.map((v, k) => (k === 7 ? Infinity : v)) } : c))
		};
		// the velocity next to it (central difference, sample 7 at 0.06 s) is the first: named before the moments it spoils
		expect(() => runPipeline(built, bad, { cutoffHz: null })).toThrow(
			/the velocity of DOF right\.knee\.flexion is -?Infinity at 0\.06 s \(sample 7\)/
		);
	});

	it('assertFiniteResults passes finite results and refuses a summary figure that is not finite', () => {
		const r = runPipeline(built, rec, {});
		expect(() => assertFiniteResults(r.time, r.dofs, r.base, r.reactions, r.summary)).not.toThrow();
		const summary = r.summary.map((s, i) => (i === 4 ? { ...s, mean: Infinity } : s));
		expect(() => assertFiniteResults(r.time, r.dofs, r.base, r.reactions, summary)).toThrow(
			new RegExp(`summary of the ${r.summary[4].quantity} of DOF ${r.summary[4].dof.replace(/\./g, '\\.')} holds Infinity`)
		);
		const force = Float64Array.from(r.reactions[1].force);
		force[3 * 10 + 2] = NaN;
		const reactions = r.reactions.map((x, i) => (i === 1 ? { ...x, force } : x));
		expect(() => assertFiniteResults(r.time, r.dofs, r.base, reactions, r.summary)).toThrow(
			new RegExp(`reaction force \\(z\\) of joint ${r.reactions[1].joint.replace(/\./g, '\\.')} is NaN at 0\\.1 s \\(sample 11\\)`)
		);
	});
});
