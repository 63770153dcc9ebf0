// Recording files: our layout, delimiters, encodings, mapping, units, and one check per validation rule (incl. the malformed corpus).
import { readFileSync, readdirSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, test } from 'vitest';
import {
	columnMappingSchema,
	MAX_PROBLEMS_PER_CODE,
	parseRecording,
	PHYSIOLOGICAL_RANGES,
	schemeKind,
	suggestChannel,
	type ColumnMapping,
	type ExpectedChannel,
	type ParseOptions,
	type ParseResult
} from '../../../src/lib/processing/recording';
import { scaleLimbs, LIMBS } from '../../../src/lib/anthropometry/scale';

const FIX = join(import.meta.dirname, '../../fixtures/recordings');
const LEG: ExpectedChannel[] = ['right.hip.flexion', 'right.knee.flexion', 'right.ankle.dorsiflexion'].map((name) => ({
	name,
	kind: 'angle'
}));
const channels = (names: string[]): ExpectedChannel[] => names.map((name) => ({ name, kind: schemeKind(name) }));
const opts = (o: Partial<ParseOptions> = {}): ParseOptions => ({ fileName: 'trial.csv', expected: LEG, ...o });

async function* chunked(bytes: Uint8Array, size: number): AsyncGenerator<Uint8Array> {
	for (let i = 0; i < bytes.length; i += size) yield bytes.slice(i, i + size);
}
const utf8 = (s: string) => new TextEncoder().encode(s);

/** A file in our layout at `hz`, one line per sample, `cells(i, t)` giving the angle cells. */
function file(
	header: string,
	n: number,
	cells: (i: number, t: number) => (string | number)[],
	{ hz = 100, d = ',', timeDigits = 2 } = {}
): string {
	const lines = [header];
	for (let i = 0; i < n; i++) lines.push([(i / hz).toFixed(timeDigits), ...cells(i, i / hz)].join(d));
	return lines.join('\n') + '\n';
}
const legFile = (n = 40, cells: (i: number, t: number) => (string | number)[] = (i) => [10 + i, 20 + i, -5]) =>
	file('time (s),right.hip.flexion (deg),right.knee.flexion (deg),right.ankle.dorsiflexion (deg)', n, cells);

function problems(r: ParseResult) {
	if (r.ok) throw new Error(`expected problems, got a recording with warnings ${JSON.stringify(r.recording.warnings)}`);
	return r.problems;
}
function recording(r: ParseResult) {
	if (!r.ok) throw new Error(`expected a recording, got ${JSON.stringify(r.problems, null, 1)}`);
	return r.recording;
}
const codes = (r: ParseResult) => problems(r).map((p) => p.code);

describe('well-formed samples (tests/fixtures/recordings/good)', () => {
	const index = JSON.parse(readFileSync(join(FIX, 'good/index.json'), 'utf8')) as Record<string, { expected: string[] }>;
	const load = async (name: string) =>
		recording(
			await parseRecording(
				new Uint8Array(readFileSync(join(FIX, 'good', name))),
				opts({ fileName: name, expected: channels(index[name].expected) })
			)
		);

	test.each(Object.keys(index))('%s parses with no warnings, at 100 Hz, channels in the expected order', async (name) => {
		const rec = await load(name);
		expect(rec.warnings).toEqual([]);
		expect(rec.sampleHz).toBeCloseTo(100, 9);
		expect(rec.time.length).toBe(50);
		expect(rec.channels.map((c) => c.name)).toEqual(index[name].expected);
		expect(rec.time[49]).toBeCloseTo(0.49, 12);
	});

	test('comma, semicolon with decimal comma, tab, BOM+CRLF and time in ms give identical numbers', async () => {
		const ref = await load('ours-comma.csv');
		for (const name of ['semicolon-decimal-comma.csv', 'tab.csv', 'bom-crlf.csv', 'time-ms.csv']) {
			const rec = await load(name);
			expect(rec.channels, name).toEqual(ref.channels);
			expect(rec.time, name).toEqual(ref.time);
		}
		expect((await load('semicolon-decimal-comma.csv')).delimiter).toBe(';');
		expect((await load('tab.csv')).delimiter).toBe('\t');
		expect(ref.delimiter).toBe(',');
	});

	test('the BOM is not part of the first header', async () => {
		expect((await load('bom-crlf.csv')).header[0]).toBe('time (s)');
	});

	test('radians give the same angles as degrees (to the printed decimals: 0.0005° and 5e-7 rad)', async () => {
		const deg = await load('ours-comma.csv');
		const rad = await load('rad.csv');
		const tol = 0.0005 * (Math.PI / 180) + 5e-7;
		deg.channels.forEach((c, k) => c.values.forEach((v, i) => expect(Math.abs(rad.channels[k].values[i] - v)).toBeLessThan(tol)));
	});

	test('a moving arm base: positions in mm become m, base angles in deg become rad', async () => {
		const rec = await load('arm-moving-base.csv');
		const get = (n: string) => rec.channels.find((c) => c.name === n)!.values;
		expect(get('right.arm.base.py')[3]).toBe(1.4); // 1400.0 mm / 1000
		expect(get('right.arm.base.px')[10]).toBe(0.001); // 1.0 mm
		expect(get('right.arm.base.ry')[20]).toBeCloseTo((1 * Math.PI) / 180, 15); // 5 °/s × 0.2 s = 1°
	});
});

describe('units and signs', () => {
	test('deg → rad is exact through π/180 (180° = π rad by definition)', async () => {
		const text = legFile(40, () => [180, 90, -45]);
		const rec = recording(await parseRecording(text, opts()));
		expect(rec.channels[0].values[0]).toBe(Math.PI);
		expect(rec.channels[1].values[0]).toBe(Math.PI / 2);
		expect(rec.channels[2].values[0]).toBe(-Math.PI / 4);
	});

	test('columns without a unit need a choice: unit-unknown, or the chosen default unit', async () => {
		const text = file('time,right.hip.flexion,right.knee.flexion,right.ankle.dorsiflexion', 40, () => [1, 2, 3]);
		const r = await parseRecording(text, opts());
		expect(codes(r)).toEqual(['unit-unknown', 'unit-unknown', 'unit-unknown']);
		expect(problems(r)[0]).toMatchObject({ row: 1, column: 'right.hip.flexion', severity: 'error' });
		expect(problems(r)[0].message).toMatch(/choose degrees or radians/);
		const deg = recording(await parseRecording(text, opts({ defaultAngleUnit: 'deg' })));
		expect(deg.channels[1].values[0]).toBe((2 * Math.PI) / 180);
		const rad = recording(await parseRecording(text, opts({ defaultAngleUnit: 'rad' })));
		expect(rad.channels[1].values[0]).toBe(2);
	});

	test('a unit in the header wins over the default unit', async () => {
		const text = file('time,right.hip.flexion (rad),right.knee.flexion,right.ankle.dorsiflexion', 40, () => [1, 2, 3]);
		const rec = recording(await parseRecording(text, opts({ defaultAngleUnit: 'deg' })));
		expect(rec.channels[0].values[0]).toBe(1);
	});

	test('time (ms) is converted to seconds and sets the sampling rate', async () => {
		const text = file('time (ms),right.hip.flexion (deg),right.knee.flexion (deg),right.ankle.dorsiflexion (deg)', 40, () => [1, 2, 3], {
			hz: 0.25,
			timeDigits: 0
		});
		const rec = recording(await parseRecording(text, opts()));
		expect(rec.time[1]).toBe(0.004);
		expect(rec.sampleHz).toBeCloseTo(250, 9);
	});

	test('every DOF the scaled models have has a physiological range', () => {
		const model = scaleLimbs({ sex: 'female', bodyMass: 70, stature: 1.7 }, 'de-leva-1996', LIMBS);
		for (const d of model.dofs) expect(PHYSIOLOGICAL_RANGES[`${d.joint}.${d.motion}`], d.name).toBeDefined();
	});

	test('angles outside the physiological range are a warning naming row and column, not a rejection', async () => {
		const text = legFile(40, (i) => [10, i === 17 ? 200 : 30, 0]);
		const rec = recording(await parseRecording(text, opts()));
		expect(rec.warnings).toHaveLength(1);
		expect(rec.warnings[0]).toMatchObject({ code: 'out-of-range', severity: 'warning', row: 19, column: 'right.knee.flexion (deg)' });
		expect(rec.warnings[0].message).toMatch(/200°.*line 19/);
	});
});

describe('chunk boundaries anywhere give the same result', () => {
	const files = [
		...readdirSync(join(FIX, 'good'))
			.filter((f) => f.endsWith('.csv'))
			.map((f) => ['good', f]),
		...[
			'truncated-last-line.csv',
			'semicolon-decimal-comma-bad-cell.csv',
			'utf16le-bom.csv',
			'latin1-degree-sign.csv',
			'time-repeated-frame.csv',
			'blank-cell.csv'
		].map((f) => ['malformed', f])
	];
	const expectedFor = (dir: string, f: string) =>
		channels((JSON.parse(readFileSync(join(FIX, dir, 'index.json'), 'utf8')) as Record<string, { expected: string[] }>)[f].expected);
	test.each(files)('%s/%s fed in 1-byte, 7-byte and whole chunks', async (dir, f) => {
		const bytes = new Uint8Array(readFileSync(join(FIX, dir, f)));
		const o = opts({ fileName: f, expected: expectedFor(dir, f) });
		const whole = await parseRecording(bytes, o);
		expect(await parseRecording(chunked(bytes, 1), o)).toEqual(whole);
		expect(await parseRecording(chunked(bytes, 7), o)).toEqual(whole);
		expect(await parseRecording(chunked(bytes, bytes.length || 1), o)).toEqual(whole);
	});

	test('a multi-byte character split between chunks, and string chunks', async () => {
		const text = '\uFEFF' + legFile().replace('time (s)', '"time (s)"');
		const bytes = utf8(text);
		const whole = await parseRecording(text, opts());
		expect(whole.ok).toBe(true);
		expect(await parseRecording(chunked(bytes, 1), opts())).toEqual(whole);
		async function* strings() {
			for (let i = 0; i < text.length; i += 3) yield text.slice(i, i + 3);
		}
		expect(await parseRecording(strings(), opts())).toEqual(whole);
	});

	test('CR-only line ends', async () => {
		const rec = recording(await parseRecording(legFile().replace(/\n/g, '\r'), opts()));
		expect(rec.time.length).toBe(40);
	});

	test('a long recording streams through (120 000 lines)', async () => {
		async function* lines() {
			yield 'time (s),right.hip.flexion (deg),right.knee.flexion (deg),right.ankle.dorsiflexion (deg)\n';
			for (let k = 0; k < 120; k++) {
				let s = '';
				for (let i = k * 1000; i < (k + 1) * 1000; i++) s += `${(i / 1000).toFixed(3)},${(i % 90) / 3},${(i % 60) / 2},-5\n`;
				yield utf8(s);
			}
		}
		const rec = recording(await parseRecording(lines(), opts()));
		expect(rec.time.length).toBe(120000);
		expect(rec.sampleHz).toBeCloseTo(1000, 6);
		expect(rec.channels[1].values[119999]).toBeCloseTo(((119999 % 60) / 2) * (Math.PI / 180), 14);
	});
});

describe('validation rules', () => {
	test('problems name the file, the 1-based line and the header text; blank lines keep the numbering', async () => {
		const lines = legFile().split('\n');
		lines.splice(5, 0, ''); // an empty line 6
		lines[20] = lines[20].replace(/,-5$/, ',abc');
		const r = await parseRecording(lines.join('\n'), opts({ fileName: 'K60-T3.csv' }));
		expect(problems(r)).toEqual([
			{
				file: 'K60-T3.csv',
				row: 21,
				column: 'right.ankle.dorsiflexion (deg)',
				code: 'non-numeric',
				severity: 'error',
				message: expect.stringContaining('"abc"')
			}
		]);
	});

	test('non-numeric text is truncated in the message', async () => {
		const long = 'x'.repeat(200);
		const r = await parseRecording(
			legFile(40, (i) => [1, i === 3 ? long : 2, 3]),
			opts()
		);
		expect(problems(r)[0].message.length).toBeLessThan(200);
		expect(problems(r)[0].message).toContain('xxxx…');
	});

	test('after 20 problems of one code, one summary line says how many more', async () => {
		const r = await parseRecording(
			legFile(60, (i) => [1, i < 50 ? 'bad' : 2, 3]),
			opts()
		);
		const p = problems(r);
		expect(p.filter((x) => x.code === 'non-numeric')).toHaveLength(MAX_PROBLEMS_PER_CODE + 1);
		expect(p.at(-1)!.message).toMatch(/and 30 more/);
	});

	test('a comma file with decimal commas says that a comma cannot be the decimal mark', async () => {
		const r = await parseRecording(
			legFile(40, () => ['1,5', '2,25', '3,0']),
			opts()
		);
		expect(codes(r)[0]).toBe('cell-count');
		expect(problems(r)[0].message).toMatch(/comma cannot also be the decimal mark/);
	});

	test('decimal commas are read in semicolon and tab files', async () => {
		for (const d of [';', '\t']) {
			const text = file(
				['time (s)', 'right.hip.flexion (deg)', 'right.knee.flexion (deg)', 'right.ankle.dorsiflexion (deg)'].join(d),
				40,
				() => ['1,5', '-2,25', '1e1'],
				{ d }
			);
			const rec = recording(await parseRecording(text.replace(/(\d)\.(\d)/g, '$1,$2'), opts()));
			expect(rec.channels.map((c) => c.values[0])).toEqual([1.5 * (Math.PI / 180), -2.25 * (Math.PI / 180), 10 * (Math.PI / 180)]);
		}
	});

	test('sampling irregular beyond the tolerance names the row and both intervals; print rounding is allowed for', async () => {
		// 120 Hz printed to 4 decimals: intervals of 0.0083 and 0.0084 s are rounding, not irregular sampling
		const ok = file('time,right.hip.flexion (deg),right.knee.flexion (deg),right.ankle.dorsiflexion (deg)', 60, () => [1, 2, 3], {
			hz: 120,
			timeDigits: 4
		});
		expect(recording(await parseRecording(ok, opts())).sampleHz).toBeCloseTo(120, 1);
		const lines = legFile(60).split('\n');
		lines[30] = lines[30].replace(/^0\.29/, '0.2915');
		const r = await parseRecording(lines.join('\n'), opts());
		expect(problems(r)[0]).toMatchObject({ code: 'sampling-irregular', row: 31, column: 'time (s)' });
		expect(problems(r)[0].message).toMatch(/0\.0115 s.*0\.01 s \(100 Hz/);
		expect(recording(await parseRecording(lines.join('\n'), opts({ samplingTolerance: 0.2 }))).time.length).toBe(60);
	});

	test('short gaps are filled by cubic interpolation only when asked; long gaps are rejected', async () => {
		const truth = (t: number) => 30 + 20 * Math.sin(2 * Math.PI * t);
		const text = legFile(60, (i, t) => [1, i >= 20 && i < 23 ? '' : truth(t).toFixed(6), 3]);
		const off = await parseRecording(text, opts());
		expect(problems(off)).toHaveLength(1);
		expect(problems(off)[0]).toMatchObject({ code: 'blank-cell', row: 22, column: 'right.knee.flexion (deg)' });
		expect(problems(off)[0].message).toMatch(/Lines 22–24 \(3 samples\)/);
		const rec = recording(await parseRecording(text, opts({ fillGaps: true })));
		expect(rec.warnings).toMatchObject([{ code: 'gap-filled', row: 22, severity: 'warning' }]);
		// a cubic through the neighbours of a smooth 1 Hz sine sampled at 100 Hz: error well under 0.01°
		for (let i = 20; i < 23; i++) expect(Math.abs(rec.channels[1].values[i] * (180 / Math.PI) - truth(i / 100))).toBeLessThan(0.01);
		const long = await parseRecording(text, opts({ fillGaps: true, maxGapSamples: 2 }));
		expect(codes(long)).toEqual(['gap-too-long']);
		const edge = await parseRecording(
			legFile(60, (i) => [1, i < 2 ? 'NaN' : 5, 3]),
			opts({ fillGaps: true })
		);
		expect(problems(edge)[0].message).toMatch(/at the start of the recording/);
	});

	test('minSamples can be lowered', async () => {
		expect(codes(await parseRecording(legFile(12), opts()))).toEqual(['too-few-samples']);
		expect(recording(await parseRecording(legFile(12), opts({ minSamples: 12 }))).time.length).toBe(12);
	});

	test('every missing channel is named', async () => {
		const text = file('time,right.knee.flexion (deg)', 40, () => [1]);
		const p = problems(await parseRecording(text, opts()));
		expect(p.map((x) => [x.code, x.field])).toEqual([
			['missing-channel', 'right.hip.flexion'],
			['missing-channel', 'right.ankle.dorsiflexion']
		]);
	});
});

describe('mapping files from other systems', () => {
	// the knee column is mapped as radians below, so its values are radians a knee can reach (20 rad would be refused)
	const foreign = file('Time_ms;R Hip Flex [deg];R Knee Flex;R Ankle DF;Marker X', 40, (i) => [10, (20 + i) / 10, -5, 999], {
		hz: 0.1,
		timeDigits: 0,
		d: ';'
	});
	/** A mapping of `foreign` (time in ms, every angle column in °, the marker in mm, no flips); `changes` replace columns. */
	const foreignMapping = (changes: ColumnMapping['columns'] = {}): ColumnMapping => ({
		timeColumn: 'Time_ms',
		timeUnit: 'ms',
		columns: {
			'R Hip Flex [deg]': { channel: 'right.hip.flexion', unit: 'deg', flip: false },
			'R Knee Flex': { channel: 'right.knee.flexion', unit: 'deg', flip: false },
			'R Ankle DF': { channel: 'right.ankle.dorsiflexion', unit: 'deg', flip: false },
			'Marker X': { channel: null, unit: 'mm', flip: false },
			...changes
		}
	});

	test('headers outside our scheme ask for a mapping with suggestions a person confirms', async () => {
		const r = await parseRecording(foreign, opts());
		expect(r.ok).toBe(false);
		if (r.ok) return;
		expect(r.needsMapping?.headers).toEqual(['Time_ms', 'R Hip Flex [deg]', 'R Knee Flex', 'R Ankle DF', 'Marker X']);
		// an unknown column is suggested in ° and left unmapped
		expect(r.needsMapping?.suggested).toEqual(foreignMapping({ 'Marker X': { channel: null, unit: 'deg', flip: false } }));
		expect(columnMappingSchema.safeParse(r.needsMapping?.suggested).success).toBe(true);
		expect(codes(r)).toContain('no-time-column');
	});

	test('suggestions match by words, case and abbreviations', () => {
		expect(suggestChannel('R Knee Flex', LEG)).toBe('right.knee.flexion');
		expect(suggestChannel('RIGHT.KNEE.FLEXION', LEG)).toBe('right.knee.flexion');
		expect(suggestChannel('RightHipFlexion (deg)', LEG)).toBe('right.hip.flexion');
		expect(suggestChannel('L Knee Flex', LEG)).toBeNull();
		expect(suggestChannel('force plate 1', LEG)).toBeNull();
	});

	test('a mapping applies channel, unit, sign flip and time unit', async () => {
		const mapping = foreignMapping({
			'R Knee Flex': { channel: 'right.knee.flexion', unit: 'rad', flip: true },
			'R Ankle DF': { channel: 'right.ankle.dorsiflexion', unit: 'deg', flip: true }
		});
		const rec = recording(await parseRecording(foreign, opts({ mapping })));
		expect(rec.time[1]).toBe(0.01);
		expect(rec.sampleHz).toBeCloseTo(100, 9);
		expect(rec.channels[0].values[0]).toBe(10 * (Math.PI / 180));
		expect(rec.channels[1].values[3]).toBe(-2.3);
		expect(rec.channels[2].values[0]).toBe(5 * (Math.PI / 180));
	});

	test('mapping mistakes are named', async () => {
		const base = foreignMapping();
		const withCol = (h: string, c: ColumnMapping['columns'][string]) => foreignMapping({ [h]: c });
		const run = async (m: unknown) => codes(await parseRecording(foreign, opts({ mapping: m as ColumnMapping })));
		expect(await run(withCol('R Knee Flex', { channel: 'right.knee.flexion', unit: 'mm', flip: false }))).toEqual([
			'mapping-unit-mismatch',
			'missing-channel'
		]);
		expect(await run(withCol('R Knee Flex', { channel: 'right.hip.flexion', unit: 'deg', flip: false }))).toEqual([
			'mapping-duplicate-channel',
			'missing-channel'
		]);
		expect(await run(withCol('Marker X', { channel: 'left.knee.flexion', unit: 'deg', flip: false }))).toEqual(['mapping-unknown-channel']);
		expect(await run({ ...base, timeColumn: 'Zeit' })).toContain('mapping-column-missing');
		expect(await run({ ...base, timeUnit: 'min' })).toEqual(['mapping-invalid']);
		const { ['Marker X']: _, ...rest } = base.columns;
		expect(await run({ ...base, columns: rest })).toEqual(['unknown-column']);
	});
});

describe('malformed corpus (tests/fixtures/recordings/malformed)', () => {
	const dir = join(FIX, 'malformed');
	const index = JSON.parse(readFileSync(join(dir, 'index.json'), 'utf8')) as Record<
		string,
		{ code: string; expected: string[]; options?: Partial<ParseOptions> }
	>;

	test('has at least 25 files, each listed once in index.json', () => {
		const files = readdirSync(dir).filter((f) => f !== 'index.json');
		expect(files.length).toBeGreaterThanOrEqual(25);
		expect(files.sort()).toEqual(Object.keys(index).sort());
	});

	test.each(Object.entries(index))('%s is rejected with its code and a message', async (name, { code, expected, options }) => {
		const r = await parseRecording(
			new Uint8Array(readFileSync(join(dir, name))),
			opts({ fileName: name, expected: channels(expected), ...options })
		);
		const p = problems(r);
		expect(p.map((x) => x.code)).toContain(code);
		const hit = p.find((x) => x.code === code)!;
		expect(hit).toMatchObject({ file: name, severity: 'error' });
		expect(hit.message.length).toBeGreaterThan(20);
		if (!['empty-file', 'not-text'].includes(code)) expect(hit.row).toBeGreaterThanOrEqual(1);
	});
});

describe('checking without keeping values (keepValues: false, as the upload does)', () => {
	// the upload checks with keepValues: false and the worker parses again with values: both must judge a file alike
	const same = async (bytes: Uint8Array, o: ParseOptions) => {
		const full = await parseRecording(bytes, o);
		const scan = await parseRecording(chunked(bytes, 7), { ...o, keepValues: false });
		expect(scan.ok).toBe(full.ok);
		if (full.ok && scan.ok) {
			expect(scan.recording.warnings).toEqual(full.recording.warnings);
			expect(scan.recording.sampleHz).toBe(full.recording.sampleHz);
			expect(Array.from(scan.recording.time)).toEqual(Array.from(full.recording.time));
			expect(scan.recording.channels.map((c) => [c.name, c.values.length])).toEqual(full.recording.channels.map((c) => [c.name, 0]));
		} else if (!full.ok && !scan.ok) expect(scan.problems).toEqual(full.problems);
	};
	const malformed = JSON.parse(readFileSync(join(FIX, 'malformed/index.json'), 'utf8')) as Record<
		string,
		{ expected: string[]; options?: Partial<ParseOptions> }
	>;
	test.each(Object.entries(malformed))('malformed %s: the same problems', async (name, { expected, options }) => {
		await same(
			new Uint8Array(readFileSync(join(FIX, 'malformed', name))),
			opts({ fileName: name, expected: channels(expected), ...options })
		);
	});
	const good = JSON.parse(readFileSync(join(FIX, 'good/index.json'), 'utf8')) as Record<string, { expected: string[] }>;
	test.each(Object.entries(good))('good %s: the same recording apart from the values', async (name, { expected }) => {
		await same(new Uint8Array(readFileSync(join(FIX, 'good', name))), opts({ fileName: name, expected: channels(expected) }));
	});
	test('gaps (refused, bridged, too long, at the edges) and out-of-range angles: the same problems and warnings', async () => {
		const blanks = new Set([0, 7, 8, 20, 31, 32, 33, 34, 35, 36, 37, 38, 39, 40, 41, 42, 59]);
		const text = utf8(legFile(60, (i) => [blanks.has(i) ? '' : 10 + i, i === 12 ? 199 : 20 + i, i === 50 ? 'NaN' : i === 51 ? -80 : -5]));
		for (const fillGaps of [false, true]) await same(text, opts({ fillGaps }));
		const inner = utf8(legFile(60, (i) => [i === 7 || i === 8 ? '' : 10 + i, i === 12 ? 199 : 20 + i, -5]));
		await same(inner, opts({ fillGaps: true }));
		const ok = recording(await parseRecording(inner, opts({ fillGaps: true, keepValues: false })));
		expect(ok.warnings.map((w) => w.code).sort()).toEqual(['gap-filled', 'out-of-range']);
	});
});

describe('hard limits: values no recording of a person can hold are refused (impossible-value)', () => {
	// the knee cell of line 19 (sample 17) replaced by `cell`; everything else a valid file
	const kneeAt17 = (cell: string) => legFile(40, (i) => [10, i === 17 ? cell : 30, 0]);
	const refusedAt = async (text: string, o: Partial<ParseOptions> = {}) => {
		const p = problems(await parseRecording(text, opts(o)));
		const hits = p.filter((x) => x.code === 'impossible-value');
		expect(hits, JSON.stringify(p)).toHaveLength(1);
		// the same verdict when only checking (the upload) and when fed in 7-byte chunks
		const scan = await parseRecording(chunked(utf8(text), 7), opts({ ...o, keepValues: false }));
		expect(scan.ok ? [] : scan.problems).toEqual(p);
		return hits[0];
	};

	test.each([
		['7e13', /7000000000000\d*°.*±720°/],
		['1e308', /1e\+308°.*±720°/],
		['-721', /-721°.*±720°/],
		['720.001', /720°.*±720°/]
	])('an angle of %s° is refused with file, line and column', async (cell, text) => {
		const p = await refusedAt(kneeAt17(cell));
		expect(p).toMatchObject({ file: 'trial.csv', row: 19, column: 'right.knee.flexion (deg)', severity: 'error' });
		expect(p.message).toContain(`Line 19, column 3 ("right.knee.flexion (deg)"): "${cell}"`);
		expect(p.message).toMatch(text);
	});

	test.each(['1e400', '-1e400'])('%s overflows (parses to ±Infinity) and is refused, not read as text', async (cell) => {
		const p = await refusedAt(kneeAt17(cell));
		expect(p).toMatchObject({ row: 19, column: 'right.knee.flexion (deg)' });
		expect(p.message).toMatch(/overflows to infinity/);
	});

	// IEEE 754-2008 binary64: the smallest positive normal number is 2^−1022 ≈ 2.2250738585072014e-308; below it lie the
	// subnormals (down to 2^−1074 ≈ 4.9e-324) and then 0
	test.each(['1e-400', '-1e-400', '2.2e-308', '5e-324', '0.0000001e-320'])(
		'%s underflows (a non-zero literal read as 0 or as a subnormal) and is refused',
		async (cell) => {
			const p = await refusedAt(kneeAt17(cell));
			expect(p).toMatchObject({ row: 19, column: 'right.knee.flexion (deg)' });
			expect(p.message).toMatch(/underflow/);
		}
	);

	test('before this check 1e-400 was read as 0 silently: now it is not, while real zeros stay zeros', async () => {
		expect(Number('1e-400')).toBe(0);
		const zeros = recording(
			await parseRecording(
				legFile(40, (i) => [10, 30, i === 3 ? '0' : i === 4 ? '-0.000' : i === 5 ? '0e-400' : i === 6 ? '2.2250738585072014e-308' : 0]),
				opts()
			)
		);
		expect(zeros.channels[2].values[5]).toBe(0);
		expect(zeros.channels[2].values[6]).toBe(2.2250738585072014e-308 * (Math.PI / 180));
	});

	test('values just inside the limits are accepted (with the usual range warning)', async () => {
		for (const cell of ['720', '-720', '719.999', '-719.999']) {
			const rec = recording(await parseRecording(kneeAt17(cell), opts()));
			expect(rec.channels[1].values[17]).toBe(Number(cell) * (Math.PI / 180));
			expect(rec.warnings.map((w) => w.code)).toEqual(['out-of-range']);
		}
	});

	test('radians are compared with 4π (720°): 12.566 rad accepted, 12.567 rad refused', async () => {
		const rad = (cell: string) =>
			file('time (s),right.hip.flexion (rad),right.knee.flexion (rad),right.ankle.dorsiflexion (rad)', 40, (i) => [
				0.1,
				i === 17 ? cell : 0.5,
				0
			]);
		expect(4 * Math.PI).toBeGreaterThan(12.566);
		expect(4 * Math.PI).toBeLessThan(12.567);
		expect(recording(await parseRecording(rad('12.566'), opts())).channels[1].values[17]).toBe(12.566);
		const p = await refusedAt(rad('-12.567'));
		expect(p.message).toMatch(/"-12\.567" \(rad\) is -720°/);
	});

	const MOVING = channels(['right.knee.flexion', 'right.leg.base.px', 'right.leg.base.py']);
	const based = (unit: 'm' | 'mm', cell: string) =>
		file(`time (s),right.knee.flexion (deg),right.leg.base.px (${unit}),right.leg.base.py (${unit})`, 40, (i) => [
			30,
			i === 17 ? cell : unit === 'm' ? 0.2 : 200,
			unit === 'm' ? 0.9 : 900
		]);

	test('a base position of 101 m is refused; 100 m is accepted; a column in mm is compared in m', async () => {
		const m = await refusedAt(based('m', '101'), { expected: MOVING });
		expect(m).toMatchObject({ row: 19, column: 'right.leg.base.px (m)' });
		expect(m.message).toMatch(/"101" \(m\) is 101 m, beyond the hard limit of ±100 m/);
		const mm = await refusedAt(based('mm', '-101000'), { expected: MOVING });
		expect(mm.message).toMatch(/"-101000" \(mm\) is -101 m/);
		for (const [unit, cell] of [
			['m', '100'],
			['m', '-99.999'],
			['mm', '100000'],
			['mm', '-99999.9']
		] as const)
			expect(recording(await parseRecording(based(unit, cell), opts({ expected: MOVING }))).channels[1].values[17]).toBeCloseTo(
				Number(cell) / (unit === 'mm' ? 1000 : 1),
				12
			);
	});

	test('mapped files are held to the same limits after unit conversion (and a sign flip changes nothing)', async () => {
		const text = file('T;Knee;Pelvis X', 40, (i) => [30, i === 17 ? '100500' : '200'], { d: ';' });
		const mapping: ColumnMapping = {
			timeColumn: 'T',
			timeUnit: 's',
			columns: {
				Knee: { channel: 'right.knee.flexion', unit: 'deg', flip: true },
				'Pelvis X': { channel: 'right.leg.base.px', unit: 'mm', flip: true }
			}
		};
		const expected = channels(['right.knee.flexion', 'right.leg.base.px']);
		const p = await refusedAt(text, { expected, mapping });
		expect(p).toMatchObject({ row: 19, column: 'Pelvis X' });
		expect(p.message).toMatch(/100\.5 m/);
		const ok = recording(
			await parseRecording(
				file('T;Knee;Pelvis X', 40, () => [30, '99999'], { d: ';' }),
				opts({ expected, mapping })
			)
		);
		expect(ok.channels[1].values[0]).toBeCloseTo(-99.999, 12);
	});

	test('an overflowing or underflowing time cell is refused too', async () => {
		const lines = legFile().split('\n');
		lines[9] = lines[9].replace(/^[^,]+/, '1e-400');
		const p = await refusedAt(lines.join('\n'));
		expect(p).toMatchObject({ row: 10, column: 'time (s)' });
		lines[9] = legFile()
			.split('\n')[9]
			.replace(/^[^,]+/, '1e400');
		expect((await refusedAt(lines.join('\n'))).message).toMatch(/overflows/);
	});
});

describe('line ends: LF, CRLF and lone CR, also mixed in one file', () => {
	const lf = legFile(40, (i) => [10 + i, 20 + i, -5]);
	/** The same file with line k ended by LF, CRLF or CR in turn (as after editing on other systems). */
	const mixed = (text: string) =>
		text
			.split('\n')
			.map((line, k, all) => (k === all.length - 1 ? line : line + ['\n', '\r', '\r\n'][k % 3]))
			.join('');

	test("a mixed file gives the LF file's recording, fed in 1-byte, 7-byte and whole chunks and as strings", async () => {
		const text = mixed(lf);
		expect(text).toMatch(/\r[^\n]/);
		expect(text).toMatch(/[^\r]\n/);
		expect(text).toMatch(/\r\n/);
		const want = recording(await parseRecording(lf, opts()));
		const bytes = utf8(text);
		const whole = await parseRecording(bytes, opts());
		expect(recording(whole)).toEqual(want);
		expect(await parseRecording(chunked(bytes, 1), opts())).toEqual(whole);
		expect(await parseRecording(chunked(bytes, 7), opts())).toEqual(whole);
		expect(await parseRecording(chunked(bytes, bytes.length), opts())).toEqual(whole);
		async function* strings() {
			for (let i = 0; i < text.length; i += 2) yield text.slice(i, i + 2);
		}
		expect(await parseRecording(strings(), opts())).toEqual(whole);
	});

	test('a CRLF pair split across two chunks ends one line, not two', async () => {
		const text = lf.replace(/\n/g, '\r\n');
		const bytes = utf8(text);
		const at = text.indexOf('\r\n', 200) + 1; // chunk boundary between the CR and the LF
		async function* split() {
			yield bytes.slice(0, at);
			yield bytes.slice(at);
		}
		const r = await parseRecording(split(), opts());
		expect(r).toEqual(await parseRecording(lf, opts()));
	});

	test('line numbers in problems count every kind of line end once', async () => {
		const lines = lf.split('\n');
		lines[19] = lines[19].replace(/,-5$/, ',oops'); // line 20
		lines[30] = lines[30] + ',1'; // line 31
		const text = mixed(lines.join('\n'));
		const want = problems(await parseRecording(lines.join('\n'), opts()));
		expect(want.map((p) => [p.code, p.row])).toEqual([
			['non-numeric', 20],
			['cell-count', 31]
		]);
		for (const size of [1, 7, text.length]) expect(problems(await parseRecording(chunked(utf8(text), size), opts()))).toEqual(want);
	});

	test('a CRLF sample file reads the same with every CRLF replaced by a lone CR, in 7-byte chunks', async () => {
		const rec = recording(await parseRecording(new Uint8Array(readFileSync(join(FIX, 'good', 'bom-crlf.csv'))), opts()));
		const cr = new TextDecoder().decode(readFileSync(join(FIX, 'good', 'bom-crlf.csv'))).replace(/\r\n/g, '\r');
		expect(recording(await parseRecording(chunked(utf8(cr), 7), opts()))).toEqual(rec);
	});
});
