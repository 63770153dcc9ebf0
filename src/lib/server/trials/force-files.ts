// A force file uploaded with an angle file: which angle file it belongs to (by name or by a form field), which of
// the lab's plates its columns name, and the checks made before anything is stored — parsed against the plates'
// channels (file, line, column in every message), paired with the angle recording (rate ratio, start, length), and
// every contact's centre of pressure on its plate. Pure of the database: the caller passes the plates in use.
import { basename } from 'node:path';
import {
	detectDelimiter,
	forceChannelsOf,
	pairForceRecording,
	parseRecording,
	plateChannelParts,
	plateSignalsOf
} from '../../processing/recording';
import type { ColumnMapping, Problem, Recording } from '../../processing/recording';
import { DEFAULT_CONTACT_THRESHOLD_N, findContacts, plateToLab, type ForcePlate } from '../../processing/forces';

/** `walk01.forces.csv` belongs to `walk01.csv`. */
const FORCE_NAME = /^(.*)\.forces(\.[^./\\]+)$/i;

/**
 * The angle file a file belongs to when it is a force file, else null: the form field `forcesFor.<file name>`
 * (value: the angle file's name) chooses it; otherwise a name `<stem>.forces.<ext>` pairs with `<stem>.<ext>`.
 */
export function angleFileFor(fileName: string, fields: Map<string, string>): string | null {
	const chosen = fields.get(`forcesFor.${fileName}`)?.trim();
	if (chosen) return basename(chosen.replace(/\\/g, '/'));
	const m = FORCE_NAME.exec(fileName);
	return m ? `${m[1]}${m[2]}` : null;
}

/** A force file read whole (it is checked against its angle file, which may come later in the body). */
export interface BufferedForce {
	fileName: string;
	bytes: Buffer;
	contentType: string | null;
	/** larger than the upload limit: refused */
	truncated: boolean;
	/** the angle file it belongs to */
	angleFile: string;
}

/** The header cells of a delimited file's first line, without quotes and without a trailing unit "(N)". */
export function headerCells(bytes: Buffer): string[] {
	const end = bytes.indexOf(10);
	let line = bytes.subarray(0, end < 0 ? Math.min(bytes.length, 65536) : end).toString('utf8');
	if (line.charCodeAt(0) === 0xfeff) line = line.slice(1);
	line = line.replace(/\r$/, '');
	const d = detectDelimiter(line);
	return line.split(d).map((c) =>
		c
			.trim()
			.replace(/^"(.*)"$/, '$1')
			.trim()
	);
}

const channelOf = (cell: string) => cell.replace(/\s*\([^)]*\)\s*$/, '').trim();

export interface ForceCheck {
	ok: true;
	recording: Recording;
	plates: ForcePlate[];
	ratio: number;
}

const problem = (file: string, p: Omit<Problem, 'file' | 'severity'>): Problem => ({ file, severity: 'error', ...p });
const fmt = (x: number, digits = 6) => String(Number(x.toPrecision(digits)));

/** The columns that name a force plate: our column scheme in the header, or the channels a mapping gives its columns. */
export function plateColumns(cells: readonly string[], mapping?: ColumnMapping): { column: string; plate: string }[] {
	const named: { column: string; plate: string }[] = [];
	if (mapping) {
		for (const [column, target] of Object.entries(mapping.columns)) {
			const parts = target.channel ? plateChannelParts(target.channel) : undefined;
			if (parts) named.push({ column, plate: parts.plate });
		}
	} else
		for (const column of cells) {
			const parts = plateChannelParts(channelOf(column));
			if (parts) named.push({ column, plate: parts.plate });
		}
	return named;
}

/**
 * The plates the named columns use, or one problem per plate that is not set up in the lab (naming its first column
 * and the plates in use).
 */
export function platesOfColumns(
	file: string,
	named: readonly { column: string; plate: string }[],
	platesInUse: readonly ForcePlate[]
): { ok: true; plates: ForcePlate[] } | { ok: false; problems: Problem[] } {
	const known = new Map(platesInUse.map((p) => [p.name, p]));
	const problems: Problem[] = [];
	const seen = new Set<string>();
	for (const { column, plate } of named) {
		if (known.has(plate) || seen.has(plate)) continue;
		seen.add(plate);
		problems.push(
			problem(file, {
				row: 1,
				column,
				code: 'plate-unknown',
				message: `Column "${column}" of ${file} names the force plate "${plate}", which is not set up in the lab; ${inUseText(platesInUse)}. Rename the columns after a plate in use, or ask a lab administrator to set the plate up.`
			})
		);
	}
	if (problems.length) return { ok: false, problems };
	return { ok: true, plates: [...new Set(named.map((n) => n.plate))].map((n) => known.get(n)!) };
}

const inUseText = (platesInUse: readonly ForcePlate[]) =>
	platesInUse.length
		? `the plates set up in the lab are ${platesInUse.map((p) => p.name).join(', ')}`
		: 'no force plates are set up in the lab';

/**
 * Every contact's CoP must lie on its plate (within the contacts' margin): a CoP off the plate is a wrong plate
 * set-up or a bad export. One problem per contact that leaves its plate, naming the line (the file's header is line 1).
 */
export function copOffPlateProblems(
	file: string,
	recording: Recording,
	plates: readonly ForcePlate[],
	opts: { sampleHz: number; thresholdN: number }
): Problem[] {
	const problems: Problem[] = [];
	const signals = plateSignalsOf(recording, plates);
	const t = recording.time;
	for (const plate of plates) {
		const loads = plateToLab(plate, signals.get(plate.name)!, { thresholdN: opts.thresholdN });
		for (const c of findContacts(plate, loads, { sampleHz: opts.sampleHz, thresholdN: opts.thresholdN })) {
			if (!c.offPlate || c.offPlateAt === null) continue;
			const i = c.offPlateAt;
			problems.push(
				problem(file, {
					row: i + 2,
					field: plate.name,
					code: 'cop-off-plate',
					message: `${file}, line ${i + 2} (${fmt(t[i])} s): the centre of pressure of plate "${plate.name}" lies ${fmt(c.maxOutsideM * 1000, 3)} mm outside the plate at most during the contact from ${fmt(t[c.start])} s to ${fmt(t[c.end])} s (lines ${c.start + 2}–${c.end + 2}). Check that the plate's corners, axes and origin depth in the lab match this plate, and that its columns are in the plate's own axes.`
				})
			);
		}
	}
	return problems;
}

/**
 * Every check of a force file against its angle recording and the lab's plates in use; the problems (each naming
 * the file, and the line, column or plate) when it fails.
 */
export async function checkForceFile(
	force: BufferedForce,
	angle: { fileName: string; recording: Recording },
	platesInUse: readonly ForcePlate[],
	opts: { mapping?: ColumnMapping; thresholdN?: number } = {}
): Promise<ForceCheck | { ok: false; problems: Problem[] }> {
	const file = force.fileName;
	const thresholdN = opts.thresholdN ?? DEFAULT_CONTACT_THRESHOLD_N;
	const names = platesInUse.map((p) => p.name);
	// which plates the file names: our column scheme in the header, or the channels a mapping gives its columns
	const named = plateColumns(headerCells(force.bytes), opts.mapping);
	const of = platesOfColumns(file, named, platesInUse);
	if (!of.ok) return of;
	const used = of.plates;
	if (!used.length)
		return {
			ok: false,
			problems: [
				problem(file, {
					row: 1,
					code: 'no-plate-columns',
					message: `${file} has no force-plate columns: name them after a plate in use, e.g. "${names[0] ?? 'plate1'}.force.x (N)" (${inUseText(platesInUse)}), or map the columns.`
				})
			]
		};
	const parsed = await parseRecording(force.bytes, {
		fileName: file,
		expected: forceChannelsOf(used, { thresholdN }),
		mapping: opts.mapping
	});
	if (!parsed.ok) return { ok: false, problems: parsed.problems };
	const paired = pairForceRecording(angle.recording, parsed.recording, { angle: angle.fileName, force: file });
	if (!paired.ok) return { ok: false, problems: paired.problems };
	const { pairing } = paired;
	const problems = copOffPlateProblems(file, pairing.force, used, { sampleHz: pairing.forceHz, thresholdN });
	if (problems.length) return { ok: false, problems };
	return { ok: true, recording: pairing.force, plates: used, ratio: pairing.ratio };
}
