// Force-plate columns in recordings (src/lib/processing/recording/forces.ts and the parse's plate rules): our column
// scheme, unit conversions (checked against mathjs and the SI Brochure), missing components, wrong unit dimensions,
// empty cells during contact, hard limits, the mapping of a foreign header, one file with angles and forces, and the
// pairing of a separate force file with its angle recording (rate ratio, start, length).
import { create, unitDependencies } from 'mathjs';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, test } from 'vitest';
import { resamplePlateSignals } from '../../../src/lib/processing/forces';
import {
	forceChannels,
	forceChannelsOf,
	HARD_LIMITS,
	pairForceRecording,
	parseRecording,
	plateChannelNames,
	plateSignalsOf,
	schemeKind,
	splitAngleAndForce,
	type ColumnMapping,
	type ExpectedChannel,
	type ParseResult,
	type Recording
} from '../../../src/lib/processing/recording';
import { isSchemeName } from '../../../src/lib/processing/recording/layout';
import { conversion, mathjsName, unitOf, UNITS } from '../../../src/lib/processing/recording/units';
import { floorPlate } from './forces/plates';

// 0.6 m × 0.4 m in the floor: plate x = lab X, plate y = lab Z, plate z = −lab Y (into the floor)
const P1 = floorPlate('plate1', { x: [0, 0.6], z: [0, 0.4] });
const P2 = floorPlate('plate2', { x: [0, 0.6], z: [0, 0.4], output: 'forces-cop' });

const LEG: ExpectedChannel[] = ['right.hip.flexion', 'right.knee.flexion', 'right.ankle.dorsiflexion'].map((name) => ({
	name,
	kind: 'angle'
}));

function recording(r: ParseResult): Recording {
	if (!r.ok) throw new Error(`expected a recording, got ${JSON.stringify(r.problems, null, 1)}`);
	return r.recording;
}
function problems(r: ParseResult) {
	if (r.ok) throw new Error('expected problems, got a recording');
	return r.problems;
}

/** Plate 1 (forces-moments) cells of sample i: made-up smooth loads, the plate loaded throughout. */
const p1 = (i: number) => [10 + 0.01 * i, -20 + 0.02 * i, 800 + i, 60, -100 + 0.1 * i, 5];
/** Plate 2 (forces-cop) cells: unloaded (Fz = 3 N, CoP and free moment empty) for i < 20, then loaded at 700 N. */
const p2 = (i: number) => (i < 20 ? [0, 0, 3, '', '', '', ''] : [5, -7, 700, 0.1 + 0.001 * i, -0.05, -0.04, 1.5]);
const P1_HEADER =
	'plate1.force.x (N),plate1.force.y (N),plate1.force.z (N),plate1.moment.x (N·m),plate1.moment.y (N*m),plate1.moment.z (Nm)';
const P2_HEADER =
	'plate2.force.x (N),plate2.force.y (N),plate2.force.z (N),plate2.cop.x (m),plate2.cop.y (m),plate2.cop.z (m),plate2.freemoment (N.m)';

/** A file: header, then n lines at hz of time and cells(i). */
function file(header: string, n: number, cells: (i: number) => (string | number)[], { hz = 1000, t0 = 0, digits = 3 } = {}): string {
	const lines = [header];
	for (let i = 0; i < n; i++) lines.push([(t0 + i / hz).toFixed(digits), ...cells(i)].join(','));
	return lines.join('\n') + '\n';
}
const forceFile = (n = 200, o?: { hz?: number; t0?: number; digits?: number }) =>
	file(`time (s),${P1_HEADER},${P2_HEADER}`, n, (i) => [...p1(i), ...p2(i)], o);
const angleFile = (n = 40, o?: { hz?: number; t0?: number; digits?: number }) =>
	file('time (s),right.hip.flexion (deg),right.knee.flexion (deg),right.ankle.dorsiflexion (deg)', n, (i) => [10 + i, 20, -5], o);

const parseForces = (text: string, fileName = 'forces.csv') => parseRecording(text, { fileName, expected: forceChannelsOf([P1, P2]) });
const parseAngles = (text: string, fileName = 'angles.csv') => parseRecording(text, { fileName, expected: LEG });

describe('our column scheme', () => {
	test('plate channel names are scheme names with their kinds; case matters', () => {
		expect(schemeKind('plate1.force.x')).toBe('force');
		expect(schemeKind('plate1.moment.z')).toBe('moment');
		expect(schemeKind('plate1.freemoment')).toBe('moment');
		expect(schemeKind('plate1.cop.y')).toBe('length');
		expect(schemeKind('right.knee.flexion')).toBe('angle');
		expect(isSchemeName('left-plate_2.cop.z')).toBe(true);
		expect(isSchemeName('plate1.Force.x')).toBe(false);
		expect(isSchemeName('plate1.force.w')).toBe(false);
		expect(plateChannelNames(P1)).toEqual([
			'plate1.force.x',
			'plate1.force.y',
			'plate1.force.z',
			'plate1.moment.x',
			'plate1.moment.y',
			'plate1.moment.z'
		]);
		expect(forceChannels(P2).map((c) => [c.name, c.kind])).toEqual([
			['plate2.force.x', 'force'],
			['plate2.force.y', 'force'],
			['plate2.force.z', 'force'],
			['plate2.cop.x', 'length'],
			['plate2.cop.y', 'length'],
			['plate2.cop.z', 'length'],
			['plate2.freemoment', 'moment']
		]);
	});

	test('a two-plate 1000 Hz file in our layout needs no mapping and gives each plate’s signals, interleaved x y z', async () => {
		const rec = recording(await parseForces(forceFile()));
		expect(rec.sampleHz).toBeCloseTo(1000, 9);
		expect(rec.warnings).toEqual([]);
		const s = plateSignalsOf(rec, [P1, P2]);
		const a = s.get('plate1')!;
		expect(a.force.length).toBe(600);
		expect(Array.from(a.force.subarray(3 * 7, 3 * 8))).toEqual([10.07, -19.86, 807]);
		expect(Array.from(a.moment!.subarray(3 * 7, 3 * 8))).toEqual([60, -99.3, 5]);
		expect(a.cop).toBeUndefined();
		const b = s.get('plate2')!;
		expect(Array.from(b.force.subarray(0, 3))).toEqual([0, 0, 3]);
		// unloaded: the CoP and free moment the plate left empty stay NaN
		expect(Array.from(b.cop!.subarray(0, 3))).toEqual([NaN, NaN, NaN]);
		expect(b.freeMoment![0]).toBeNaN();
		expect(Array.from(b.cop!.subarray(3 * 30, 3 * 31))).toEqual([0.13, -0.05, -0.04]);
		expect(b.freeMoment![30]).toBe(1.5);
		expect(b.moment).toBeUndefined();
	});

	test('kN, N·mm, mm and cm are converted to N, N·m and m by the factors of mathjs and the SI prefixes', async () => {
		// BIPM, The International System of Units (SI Brochure, 9th ed., 2019), Table 7: kilo = 10³, centi = 10⁻²,
		// milli = 10⁻³; and N·m is the product of N and m (section 2.3.4), so 1 N·mm = 10⁻³ N·m.
		const { unit } = create({ unitDependencies });
		const factor = (u: string, si: string) => {
			const c = conversion(u, si);
			return c.mul / c.div;
		};
		expect(factor('kN', 'N')).toBe(1000);
		expect(factor('kN', 'N')).toBe(unit(1, 'kN').toNumber('N'));
		expect(conversion('N·mm', 'N·m')).toEqual({ mul: 1, div: 1000 });
		expect(factor('N·mm', 'N·m')).toBe(unit(1, 'N mm').toNumber('N m'));
		expect(factor('kN·m', 'N·m')).toBe(1000);
		expect(conversion('cm', 'm')).toEqual({ mul: 1, div: 100 });
		for (const u of UNITS.moment) expect(factor(u, 'N·m'), u).toBe(unit(1, mathjsName(u)).toNumber('N m'));
		for (const u of ['N·m', 'N*m', 'Nm', 'N.m']) expect(mathjsName(u)).toBe('N m');
		expect(unitOf('force', 'N·m')).toBeUndefined();
		expect(unitOf('length', 'cm')).toBe('cm');

		const header =
			'time (s),plate1.force.x (kN),plate1.force.y (kN),plate1.force.z (kN),plate1.moment.x (N·mm),plate1.moment.y (N·mm),plate1.moment.z (kN·m)';
		const rec = recording(
			await parseRecording(
				file(header, 40, () => [0.0125, -0.5, 0.8123, 60000, -1500, 0.005]),
				{
					fileName: 'k.csv',
					expected: forceChannels(P1)
				}
			)
		);
		const s = plateSignalsOf(rec, [P1]).get('plate1')!;
		// 0.8123 kN × 1000: the product of the cell and mathjs's factor (812.3 within one unit in the last place)
		expect(Array.from(s.force.subarray(0, 3))).toEqual([12.5, -500, 0.8123 * 1000]);
		expect(s.force[2]).toBeCloseTo(812.3, 12);
		expect(Array.from(s.moment!.subarray(0, 3))).toEqual([60, -1.5, 5]);

		const cop =
			'time (s),plate2.force.x (N),plate2.force.y (N),plate2.force.z (N),plate2.cop.x (mm),plate2.cop.y (cm),plate2.cop.z (m),plate2.freemoment (N·m)';
		const r2 = recording(
			await parseRecording(
				file(cop, 40, () => [0, 0, 500, 123, 7.6, -0.04, 2]),
				{ fileName: 'c.csv', expected: forceChannels(P2) }
			)
		);
		expect(Array.from(plateSignalsOf(r2, [P2]).get('plate2')!.cop!.subarray(0, 3))).toEqual([0.123, 0.076, -0.04]);
	});
});

describe('bad force columns: a precise message, nothing returned', () => {
	test('a missing component names itself and what the plate needs', async () => {
		const header = 'time (s),plate1.force.x (N),plate1.force.y (N),plate1.moment.x (N·m),plate1.moment.y (N·m),plate1.moment.z (N·m)';
		const p = problems(
			await parseRecording(
				file(header, 40, () => [1, 2, 3, 4, 5]),
				{ fileName: 'f.csv', expected: forceChannels(P1) }
			)
		);
		expect(p).toHaveLength(1);
		expect(p[0]).toMatchObject({ file: 'f.csv', row: 1, field: 'plate1.force.z', code: 'missing-channel' });
		expect(p[0].message).toMatch(
			/^plate1\.force\.z is missing: a forces-moments plate needs plate1\.force\.x, \.y, \.z \(N\) and plate1\.moment\.x/
		);
		expect(p[0].message).toContain('Add a column "plate1.force.z (N)"');
	});

	test('plateSignalsOf on a recording without a plate’s channels says which one is missing', async () => {
		const rec = recording(await parseAngles(angleFile()));
		expect(() => plateSignalsOf(rec, [P2])).toThrow(/^plate2\.force\.x is missing: a forces-cop plate needs/);
	});

	test('a unit of the wrong dimension is refused naming the column and both quantities', async () => {
		const header = P1_HEADER.replace('plate1.force.x (N)', 'plate1.force.x (N·m)');
		const p = problems(await parseRecording(file(`time (s),${header}`, 40, p1), { fileName: 'f.csv', expected: forceChannels(P1) }));
		expect(p).toHaveLength(1);
		expect(p[0]).toMatchObject({ row: 1, column: 'plate1.force.x (N·m)', code: 'unit-unsupported' });
		expect(p[0].message).toBe(
			'Column "plate1.force.x (N·m)" is a force (plate1.force.x), but its unit N·m measures a moment; force columns take " (N)" or " (kN)". Check the column and its unit.'
		);
		// a CoP given an angle unit (°), and a moment with no unit
		const h2 = P2_HEADER.replace('plate2.cop.y (m)', 'plate2.cop.y (deg)').replace('plate2.freemoment (N.m)', 'plate2.freemoment');
		const q = problems(
			await parseRecording(
				file(`time (s),${h2}`, 40, (i) => p2(i + 20)),
				{ fileName: 'g.csv', expected: forceChannels(P2) }
			)
		);
		expect(q.map((x) => [x.column, x.code])).toEqual([
			['plate2.cop.y (deg)', 'unit-unsupported'],
			['plate2.freemoment', 'unit-unknown']
		]);
		expect(q[0].message).toContain('measures an angle');
		expect(q[1].message).toContain('name it "plate2.freemoment (N·m)"');
	});

	test('an empty or NaN force cell during contact is refused with its line and column: force columns are never gap-filled', async () => {
		const text = file(`time (s),${P1_HEADER}`, 40, (i) =>
			i === 5 ? [10, -20, 'NaN', 60, -100, 5] : i === 9 ? [10, '', 800, 60, -100, 5] : p1(i)
		);
		for (const fillGaps of [false, true]) {
			const p = problems(await parseRecording(text, { fileName: 'f.csv', expected: forceChannels(P1), fillGaps }));
			expect(p.map((x) => [x.row, x.column, x.code])).toEqual([
				[7, 'plate1.force.z (N)', 'force-blank'],
				[11, 'plate1.force.y (N)', 'force-blank']
			]);
			expect(p[0].message).toBe(
				'Line 7, column 4 ("plate1.force.z (N)") is empty or NaN: force-plate columns are never gap-filled: a plate gives every sample, and a value filled in during a contact would change the joint moments. Re-export the force data with every sample.'
			);
		}
	});

	test('a forces-cop plate may leave its CoP empty only while unloaded (below the threshold)', async () => {
		// line 2 + 25: loaded (700 N) with an empty cop.x
		const text = file(`time (s),${P2_HEADER}`, 40, (i) => (i === 25 ? [5, -7, 700, '', -0.05, -0.04, 1.5] : p2(i)));
		const p = problems(await parseRecording(text, { fileName: 'f.csv', expected: forceChannels(P2) }));
		expect(p).toHaveLength(1);
		expect(p[0]).toMatchObject({ row: 27, column: 'plate2.cop.x (m)', code: 'force-blank' });
		expect(p[0].message).toContain('while the plate is loaded (plate2.force.z is 700 N, at or above the 20 N contact threshold)');
		// with a threshold of 800 N the plate counts as unloaded there, and the empty cell is accepted
		const ok = recording(await parseRecording(text, { fileName: 'f.csv', expected: forceChannels(P2, { thresholdN: 800 }) }));
		expect(plateSignalsOf(ok, [P2]).get('plate2')!.cop![3 * 25]).toBeNaN();
		// the same check without keeping values (the upload's pass)
		const up = problems(await parseRecording(text, { fileName: 'f.csv', expected: forceChannels(P2), keepValues: false }));
		expect(up.map((x) => x.row)).toEqual([27]);
	});

	test('hard limits (our guards): |force| ≤ 100 kN, |moment| ≤ 20 kN·m, |CoP| ≤ 100 m, compared after unit conversion', async () => {
		expect(HARD_LIMITS).toMatchObject({ forceN: 100_000, momentNm: 20_000, copM: 100 });
		const header =
			'time (s),plate1.force.x (kN),plate1.force.y (N),plate1.force.z (N),plate1.moment.x (N·mm),plate1.moment.y (N·m),plate1.moment.z (N·m)';
		const at = (i: number) => (i === 3 ? [100.001, 1, 1, 20_000_001, 1, 1] : [100, -100_000, 1, -20_000_000, 20_000, 1]);
		const p = problems(await parseRecording(file(header, 40, at), { fileName: 'f.csv', expected: forceChannels(P1) }));
		expect(p.map((x) => [x.row, x.column, x.code])).toEqual([
			[5, 'plate1.force.x (kN)', 'impossible-value'],
			[5, 'plate1.moment.x (N·mm)', 'impossible-value']
		]);
		expect(p[0].message).toContain('is 100001 N, beyond the hard limit of ±100 kN (our guard for a force on a plate)');
		expect(p[1].message).toContain('is 20000 N·m, beyond the hard limit of ±20 kN·m');
		expect(p[1].message).toContain('"20000001" (N·m');
		const cop = file(`time (s),${P2_HEADER}`, 40, (i) => (i === 0 ? [1, 1, 500, 100.5, 0, 0, 0] : p2(i + 20)));
		const q = problems(await parseRecording(cop, { fileName: 'c.csv', expected: forceChannels(P2) }));
		expect(q.map((x) => [x.row, x.column])).toEqual([[2, 'plate2.cop.x (m)']]);
	});

	test('a plate column of a plate the trial does not use is named as such', async () => {
		const p = problems(await parseRecording(forceFile(40), { fileName: 'f.csv', expected: forceChannels(P1) }));
		expect(p[0]).toMatchObject({ row: 1, column: 'plate2.force.x (N)', code: 'unknown-column' });
		expect(p[0].message).toContain('force plate "plate2", which this trial does not use (its plates: plate1)');
	});
});

describe('other layouts through the mapping step', () => {
	test('a foreign header mapped to our plate channels (units, a sign flip), with the same checks after the mapping', async () => {
		const header = 'Time [ms];Fx1;Fy1;Fz1;Mx1;My1;Mz1;Sync';
		const lines = [header];
		for (let i = 0; i < 40; i++) lines.push([String(i), '0,01', '-0,02', '0,8', '60000', '-100000', '5000', '1'].join(';'));
		const mapping: ColumnMapping = {
			timeColumn: 'Time [ms]',
			timeUnit: 'ms',
			columns: {
				Fx1: { channel: 'plate1.force.x', unit: 'kN', flip: false },
				Fy1: { channel: 'plate1.force.y', unit: 'kN', flip: false },
				// this system writes the normal force upward: flipped to our plate z, into the plate
				Fz1: { channel: 'plate1.force.z', unit: 'kN', flip: true },
				Mx1: { channel: 'plate1.moment.x', unit: 'N·mm', flip: false },
				My1: { channel: 'plate1.moment.y', unit: 'N·mm', flip: false },
				Mz1: { channel: 'plate1.moment.z', unit: 'N·mm', flip: false },
				Sync: { channel: null, unit: 'm', flip: false }
			}
		};
		const text = lines.join('\n');
		const rec = recording(await parseRecording(text, { fileName: 'foreign.txt', expected: forceChannels(P1), mapping }));
		expect(rec.sampleHz).toBeCloseTo(1000, 9);
		const s = plateSignalsOf(rec, [P1]).get('plate1')!;
		expect(Array.from(s.force.subarray(0, 3))).toEqual([10, -20, -800]);
		expect(Array.from(s.moment!.subarray(0, 3))).toEqual([60, -100, 5]);
		// without a mapping the upload asks for one, with suggested units of the right kind for exact names
		const r = await parseRecording(text, { fileName: 'foreign.txt', expected: forceChannels(P1) });
		expect(r.ok).toBe(false);
		expect(!r.ok && r.needsMapping?.headers).toEqual(header.split(';'));
		// a mapped unit of the wrong kind is refused naming the column
		const bad = { ...mapping, columns: { ...mapping.columns, Fz1: { channel: 'plate1.force.z', unit: 'N·m' as const, flip: false } } };
		const p = problems(await parseRecording(text, { fileName: 'foreign.txt', expected: forceChannels(P1), mapping: bad }));
		expect(p).toContainEqual(
			expect.objectContaining({
				column: 'Fz1',
				code: 'mapping-unit-mismatch',
				message: 'Column "Fz1" is mapped to plate1.force.z, a force (N, kN), but its unit is set to N·m.'
			})
		);
		// an empty force cell is refused through a mapping too, with line and column
		const gap = text.replace('\n5;0,01;-0,02;0,8;', '\n5;0,01;-0,02;;');
		const g = problems(await parseRecording(gap, { fileName: 'foreign.txt', expected: forceChannels(P1), mapping }));
		expect(g.map((x) => [x.row, x.column, x.code])).toEqual([[7, 'Fz1', 'force-blank']]);
	});
});

describe('angles and forces in one file', () => {
	test('parsed in one pass, split into the angle recording and the plates’ signals', async () => {
		const header = `time (s),right.hip.flexion (deg),right.knee.flexion (deg),right.ankle.dorsiflexion (deg),${P1_HEADER}`;
		const text = file(header, 50, (i) => [10 + i, 20, -5, ...p1(i)], { hz: 200 });
		const rec = recording(await parseRecording(text, { fileName: 'both.csv', expected: [...LEG, ...forceChannelsOf([P1])] }));
		const { angles, plates } = splitAngleAndForce(rec, [P1]);
		expect(angles.channels.map((c) => c.name)).toEqual(LEG.map((c) => c.name));
		expect(angles.time).toBe(rec.time);
		expect(angles.sampleHz).toBeCloseTo(200, 9);
		expect(angles.channels[0].values[3]).toBe(13 * (Math.PI / 180));
		expect(plates.get('plate1')!.force.length).toBe(150);
		expect(plates.get('plate1')!.force[3 * 49 + 2]).toBe(849);
	});
});

describe('a separate force file paired with its angle recording', () => {
	const names = { angle: 'walk-01.csv', force: 'walk-01.forces.csv' };

	test('1000 Hz forces with 200 Hz angles: ratio 5, force cut to the angle samples, ready for the resampling', async () => {
		const angles = recording(await parseAngles(angleFile(40, { hz: 200 })));
		const forces = recording(await parseForces(forceFile(203)));
		const r = pairForceRecording(angles, forces, names);
		if (!r.ok) throw new Error(JSON.stringify(r.problems));
		expect(r.pairing.ratio).toBe(5);
		expect(r.pairing.forceHz).toBe(5 * angles.sampleHz);
		expect(r.pairing.force.time.length).toBe(200);
		const signals = plateSignalsOf(r.pairing.force, [P1]).get('plate1')!;
		const at = resamplePlateSignals(P1, signals, {
			forceHz: r.pairing.forceHz,
			angleHz: r.pairing.angleHz,
			cutoffHz: null,
			angleSamples: angles.time.length
		});
		expect(at.force.length).toBe(3 * 40);
	});

	test('rates rounded in print (300 Hz angles to 4 decimals, 900 Hz forces) still pair when the samples stay aligned', async () => {
		const angles = recording(await parseAngles(angleFile(90, { hz: 300, digits: 4 })));
		const forces = recording(await parseForces(forceFile(270, { hz: 900, digits: 5 })));
		const r = pairForceRecording(angles, forces, names);
		expect(r.ok && r.pairing.ratio).toBe(3);
	});

	test('a rate that is not a whole multiple is refused naming both files and rates', async () => {
		const angles = recording(await parseAngles(angleFile(40, { hz: 200 })));
		const forces = recording(await parseForces(forceFile(300, { hz: 1100, digits: 6 })));
		const r = pairForceRecording(angles, forces, names);
		if (r.ok) throw new Error('expected a refusal');
		expect(r.problems).toHaveLength(1);
		expect(r.problems[0]).toMatchObject({ file: 'walk-01.forces.csv', code: 'force-rate-ratio', severity: 'error' });
		expect(r.problems[0].message).toMatch(
			/^The force file "walk-01\.forces\.csv" and the angle file "walk-01\.csv" cannot be paired: The forces are sampled at 1100 Hz and the angles at 200 Hz: the ratio 5\.5 is not a whole number/
		);
	});

	test('start times more than half a force sample apart are refused naming both files', async () => {
		const angles = recording(await parseAngles(angleFile(40, { hz: 200, t0: 0.1 })));
		// 0.6 ms late at 1000 Hz (half a sample is 0.5 ms): refused; 0.4 ms late: accepted
		const late = recording(await parseForces(forceFile(200, { t0: 0.1006, digits: 4 })));
		const r = pairForceRecording(angles, late, names);
		if (r.ok) throw new Error('expected a refusal');
		expect(r.problems[0].code).toBe('force-start');
		expect(r.problems[0].message).toBe(
			'The force file "walk-01.forces.csv" starts at 0.1006 s and the angle file "walk-01.csv" at 0.1 s: 0.6 ms apart, more than half a force sample (0.5 ms at 1000 Hz). Export both from the same start of the trial (the same first time), or cut the earlier one.'
		);
		const near = recording(await parseForces(forceFile(200, { t0: 0.1004, digits: 4 })));
		expect(pairForceRecording(angles, near, names).ok).toBe(true);
	});

	test('too few force samples to reach the last angle sample are refused', async () => {
		const angles = recording(await parseAngles(angleFile(40, { hz: 200 })));
		const forces = recording(await parseForces(forceFile(195)));
		const r = pairForceRecording(angles, forces, names);
		if (r.ok) throw new Error('expected a refusal');
		expect(r.problems[0].code).toBe('force-too-short');
		expect(r.problems[0].message).toContain('has 195 samples');
		expect(r.problems[0].message).toContain('need 196 force samples at 5 per angle sample');
		expect(r.problems[0].message).toContain('"walk-01.csv"');
	});
});

describe('the sample files of the README (tests/fixtures/recordings/forces)', () => {
	const FIX = join(import.meta.dirname, '../../fixtures/recordings/forces');
	const read = (name: string) => new Uint8Array(readFileSync(join(FIX, name)));

	test('a 1000 Hz two-plate file pairs with its 200 Hz angle file and, taking every 5th sample, gives the one-file recording’s plate signals', async () => {
		const angles = recording(await parseRecording(read('walk-angles-200hz.csv'), { fileName: 'walk-angles-200hz.csv', expected: LEG }));
		const forces = recording(
			await parseRecording(read('walk-forces-1000hz.csv'), { fileName: 'walk-forces-1000hz.csv', expected: forceChannelsOf([P1, P2]) })
		);
		const both = recording(
			await parseRecording(read('walk-angles-and-forces-200hz.csv'), {
				fileName: 'walk-angles-and-forces-200hz.csv',
				expected: [...LEG, ...forceChannelsOf([P1, P2])]
			})
		);
		expect(forces.warnings).toEqual([]);
		const r = pairForceRecording(angles, forces, { angle: 'walk-angles-200hz.csv', force: 'walk-forces-1000hz.csv' });
		if (!r.ok) throw new Error(JSON.stringify(r.problems));
		expect(r.pairing.ratio).toBe(5);
		const split = splitAngleAndForce(both, [P1, P2]);
		expect(split.angles.channels).toEqual(angles.channels);
		const fromFile = plateSignalsOf(r.pairing.force, [P1, P2]);
		const k = r.pairing.ratio;
		for (const plate of [P1, P2]) {
			const a = fromFile.get(plate.name)!;
			const b = split.plates.get(plate.name)!;
			// force sample j·k of the 1000 Hz file is the 200 Hz file's sample j (both written at the same time)
			for (const key of ['force', 'moment', 'cop'] as const) {
				if (!b[key]) continue;
				const every = Float64Array.from({ length: b[key].length }, (_, i) => a[key]![3 * k * Math.floor(i / 3) + (i % 3)]);
				expect(every, `${plate.name}.${key}`).toEqual(b[key]);
			}
			// and the forces come to the angle rate (anti-alias filter, then every k-th sample) with one sample per angle sample
			const at = resamplePlateSignals(plate, a, {
				forceHz: r.pairing.forceHz,
				angleHz: r.pairing.angleHz,
				cutoffHz: 6,
				angleSamples: angles.time.length
			});
			expect(at.force.length).toBe(3 * angles.time.length);
		}
		// plate2 is unloaded (0.5 N) until 0.1 s: its CoP cells are empty there and stay NaN
		expect(fromFile.get('plate2')!.cop![0]).toBeNaN();
	});
});
