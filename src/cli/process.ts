// `npm run process -- --participant p.json --angles trial.csv --out moments.csv [--setup setup.json] [--cutoff 6|none] [--angle-unit deg|rad]`: one trial through the same parse + pipeline code the worker runs.
import { createReadStream, createWriteStream, openSync, readFileSync, readSync, closeSync } from 'node:fs';
import { basename } from 'node:path';
import { participantBodySchema, participantProblems, ScalingError, LIMBS, type Limb } from '../lib/anthropometry/scale';
import { SEGMENT_TABLE_IDS, type SegmentTableId } from '../lib/anthropometry/tables';
import { parseRecording, detectDelimiter } from '../lib/processing/recording';
import { buildSessionModel, sessionSetupProblems, SessionModelError, type SessionSetupInput } from '../lib/processing/session-model';
import { PipelineError, runPipeline, type PipelineResult } from '../lib/processing/pipeline';

const USAGE =
	'usage: npm run process -- --participant p.json --angles trial.csv --out moments.csv [--setup setup.json] [--cutoff 6|none] [--angle-unit deg|rad]';

const HELP = `${USAGE}

One trial through the same reading and processing the worker runs, without the database: joint angles in,
internal joint moments (the proximal segment on the distal one) out.

  --participant p.json   the participant's body: sex, bodyMass (kg), stature (m), optional measuredLengths, table
  --angles trial.csv     the recording (our layout: time column, one column per DOF, e.g. right.knee.flexion (deg))
  --out moments.csv      where to write the results, one row per sample (angles in deg, moments in N·m, …)
  --setup setup.json     the session set-up (limbs, bases, loads, gravity); default: the limbs whose columns the
                         file has, bases fixed upright (moving where <limb>.base.* columns exist), no loads
  --cutoff 6|none        low-pass cutoff in Hz (zero-lag Butterworth), or none; default 6
  --angle-unit deg|rad   the unit of angle columns whose header has no (deg) or (rad) suffix; a suffix in the
                         header wins. Without it, such a file is refused until the unit is chosen
  --help                 this text`;

class CliError extends Error {}

function args(argv: string[]): Record<string, string> {
	const out: Record<string, string> = {};
	for (let i = 0; i < argv.length; i++) {
		const a = argv[i];
		if (!a.startsWith('--')) throw new CliError(`unexpected argument "${a}"\n${USAGE}`);
		const key = a.slice(2);
		if (!['participant', 'angles', 'out', 'setup', 'cutoff', 'angle-unit'].includes(key))
			throw new CliError(`unknown option --${key}\n${USAGE}`);
		const v = argv[i + 1];
		if (v === undefined || v.startsWith('--')) throw new CliError(`--${key} needs a value\n${USAGE}`);
		out[key] = v;
		i++;
	}
	for (const k of ['participant', 'angles', 'out']) if (!out[k]) throw new CliError(`--${k} is required\n${USAGE}`);
	if (out['angle-unit'] !== undefined && out['angle-unit'] !== 'deg' && out['angle-unit'] !== 'rad')
		throw new CliError(`--angle-unit must be deg or rad (got "${out['angle-unit']}")\n${USAGE}`);
	return out;
}

function readJson(path: string): unknown {
	let text: string;
	try {
		text = readFileSync(path, 'utf8');
	} catch (e) {
		throw new CliError(`${path}: cannot read the file (${(e as NodeJS.ErrnoException).code ?? e})`);
	}
	try {
		return JSON.parse(text);
	} catch (e) {
		throw new CliError(`${path}: not valid JSON (${(e as Error).message})`);
	}
}

/** The header row of a file, read without loading the rest. */
function headerOf(path: string): string[] {
	const fd = openSync(path, 'r');
	try {
		const buf = Buffer.alloc(64 * 1024);
		const n = readSync(fd, buf, 0, buf.length, 0);
		const line = buf
			.subarray(0, n)
			.toString('utf8')
			.replace(/^\uFEFF/, '')
			.split(/\r?\n/)[0];
		return line.split(detectDelimiter(line)).map((h) =>
			h
				.trim()
				.replace(/^"|"$/g, '')
				.replace(/\s*\([^()]*\)$/, '')
		);
	} finally {
		closeSync(fd);
	}
}

const LIMB_OF_JOINT: Record<string, 'arm' | 'leg'> = {
	hip: 'leg',
	knee: 'leg',
	ankle: 'leg',
	shoulder: 'arm',
	elbow: 'arm',
	forearm: 'arm',
	wrist: 'arm'
};

/** Without --setup: the limbs whose columns the file has, bases fixed upright (or moving where base columns exist), no loads. */
function setupFromHeader(path: string, table: SegmentTableId): SessionSetupInput {
	const limbs = new Set<Limb>();
	const moving = new Set<Limb>();
	for (const h of headerOf(path)) {
		const parts = h.split('.');
		if (parts.length === 4 && parts[2] === 'base' && LIMBS.includes(`${parts[0]}.${parts[1]}` as Limb))
			moving.add(`${parts[0]}.${parts[1]}` as Limb);
		else if (parts.length === 3 && LIMB_OF_JOINT[parts[1]] && (parts[0] === 'right' || parts[0] === 'left'))
			limbs.add(`${parts[0]}.${LIMB_OF_JOINT[parts[1]]}` as Limb);
	}
	if (limbs.size === 0)
		throw new CliError(
			`${path}: no column in our scheme <side>.<joint>.<motion> (e.g. right.knee.flexion); give --setup with the limbs, or rename the columns`
		);
	const list = LIMBS.filter((l) => limbs.has(l));
	return {
		table,
		limbs: list,
		bases: Object.fromEntries([...moving].filter((l) => limbs.has(l)).map((l) => [l, { kind: 'moving' as const }])),
		loads: []
	};
}

const DEG = 180 / Math.PI;
const num = (v: number) => (Number.isFinite(v) ? String(Number(v.toPrecision(8))) : '');

/** Wide layout: one row per sample; per DOF angle, velocity, acceleration (deg), moment, moment per kg, power; per joint the reaction force. */
async function writeWide(path: string, r: PipelineResult): Promise<void> {
	const cols: { header: string; data: Float64Array; stride: number; offset: number; scale: number }[] = [];
	const add = (header: string, data: Float64Array, scale = 1, stride = 1, offset = 0) => cols.push({ header, data, stride, offset, scale });
	for (const b of r.base) add(`${b.name} (${b.unit === 'm' ? 'm' : 'deg'})`, b.value, b.unit === 'm' ? 1 : DEG);
	for (const d of r.dofs) {
		const lin = d.momentUnit === 'N';
		add(`${d.name}.angle (${lin ? 'm' : 'deg'})`, d.angle, lin ? 1 : DEG);
		add(`${d.name}.velocity (${lin ? 'm/s' : 'deg/s'})`, d.velocity, lin ? 1 : DEG);
		add(`${d.name}.acceleration (${lin ? 'm/s²' : 'deg/s²'})`, d.acceleration, lin ? 1 : DEG);
		add(`${d.name}.moment (${d.momentUnit})`, d.moment);
		add(`${d.name}.momentPerKg (${d.momentUnit}/kg)`, d.momentPerKg);
		add(`${d.name}.power (W)`, d.power);
	}
	for (const j of r.reactions) ['x', 'y', 'z'].forEach((axis, c) => add(`${j.joint}.reaction.${axis} (N)`, j.force, 1, 3, c));
	const out = createWriteStream(path);
	const done = new Promise<void>((res, rej) => {
		out.on('finish', res);
		out.on('error', rej);
	});
	out.write(['time (s)', ...cols.map((c) => c.header)].join(',') + '\n');
	const frames = r.time.length;
	for (let k0 = 0; k0 < frames; k0 += 1000) {
		let chunk = '';
		for (let k = k0; k < Math.min(frames, k0 + 1000); k++) {
			chunk += num(r.time[k]);
			for (const c of cols) chunk += ',' + num(c.data[k * c.stride + c.offset] * c.scale);
			chunk += '\n';
		}
		if (!out.write(chunk)) await new Promise<void>((res) => out.once('drain', () => res()));
	}
	out.end();
	await done;
}

async function main(): Promise<void> {
	if (process.argv.slice(2).some((x) => x === '--help' || x === '-h')) {
		console.log(HELP);
		return;
	}
	const a = args(process.argv.slice(2));
	const pj = readJson(a.participant) as Record<string, unknown>;
	if (!pj || typeof pj !== 'object') throw new CliError(`${a.participant}: must be a JSON object with sex, bodyMass, stature`);
	const { table: pTable, ...bodyInput } = pj;
	if (pTable !== undefined && !SEGMENT_TABLE_IDS.includes(pTable as SegmentTableId))
		throw new CliError(`${a.participant}: table: must be one of ${SEGMENT_TABLE_IDS.join(', ')} (got ${JSON.stringify(pTable)})`);
	const bodyProblems = participantProblems(bodyInput);
	if (bodyProblems.length) throw new CliError(bodyProblems.map((p) => `${a.participant}: ${p}`).join('\n'));
	const body = participantBodySchema.parse(bodyInput);

	let setup: SessionSetupInput;
	if (a.setup) {
		const s = readJson(a.setup);
		const problems = sessionSetupProblems(s);
		if (problems.length) throw new CliError(problems.map((p) => `${a.setup}: ${p}`).join('\n'));
		setup = s as SessionSetupInput;
	} else {
		setup = setupFromHeader(a.angles, (pTable as SegmentTableId | undefined) ?? 'de-leva-1996');
		console.error(
			`no --setup: ${setup.limbs.join(', ')} from the file's columns, table ${setup.table}, bases ${Object.keys(setup.bases ?? {}).length ? 'moving where base columns exist, else ' : ''}fixed upright, no loads`
		);
	}
	let cutoffHz: number | null = 6;
	if (a.cutoff !== undefined) {
		if (a.cutoff === 'none') cutoffHz = null;
		else if (/^\d+(\.\d+)?$/.test(a.cutoff) && Number(a.cutoff) > 0) cutoffHz = Number(a.cutoff);
		else throw new CliError(`--cutoff must be a positive number of hertz or "none" (got "${a.cutoff}")`);
	}

	const built = buildSessionModel(body, setup);
	const defaultAngleUnit = a['angle-unit'] as 'deg' | 'rad' | undefined;
	const parsed = await parseRecording(createReadStream(a.angles), {
		fileName: basename(a.angles),
		expected: built.expected,
		defaultAngleUnit
	});
	if (!parsed.ok) {
		const lines = parsed.problems.map(
			(p) => `${a.angles}${p.row ? `:${p.row}` : ''}${p.column ? ` [${p.column}]` : ''}: ${p.severity}: ${p.message} (${p.code})`
		);
		if (parsed.problems.some((p) => p.code === 'unit-unknown' && /choose degrees or radians/.test(p.message)))
			lines.push('on the command line, choose the unit of angle columns without a suffix with --angle-unit deg or --angle-unit rad');
		if (parsed.needsMapping)
			lines.push(
				`the columns do not follow our scheme; map them in the app (or rename them to: ${built.expected.map((e) => e.name).join(', ')})`
			);
		throw new CliError(lines.join('\n'));
	}
	for (const w of parsed.recording.warnings)
		console.error(`${a.angles}${w.row ? `:${w.row}` : ''}${w.column ? ` [${w.column}]` : ''}: warning: ${w.message}`);
	const r = runPipeline(built, parsed.recording, { cutoffHz }, undefined, { reuseInput: true });
	await writeWide(a.out, r);
	console.log(
		`${a.out}: ${r.time.length} samples at ${r.sampleHz} Hz, ${r.dofs.length} DOF (${cutoffHz === null ? 'unfiltered' : `low-pass ${cutoffHz} Hz`}); internal joint moments, proximal on distal, positive in each DOF's positive sense`
	);
	for (const s of r.summary.filter((x) => x.quantity === 'moment'))
		console.log(`  ${s.dof.padEnd(34)} moment ${num(s.peakNegative).padStart(10)} … ${num(s.peakPositive).padStart(10)} ${s.unit}`);
}

main().catch((e) => {
	if (e instanceof CliError || e instanceof ScalingError || e instanceof SessionModelError || e instanceof PipelineError)
		console.error(e.message);
	else console.error(e);
	process.exit(1);
});
