// The parse: rows of cells → a plan from the header → numbers into Float64Array blocks (checked as they pass)
// → the recording in SI units, or every problem found.
import { DEFAULT_MAX_GAP_SAMPLES, fillGaps } from '../signal';
import { Column, LineNumbers } from './blocks';
import {
	ChannelChecks,
	checkSampling,
	DEFAULT_MIN_SAMPLES,
	DEFAULT_SAMPLING_TOLERANCE,
	hardLimitOf,
	impossibleMessage,
	isPlateKind,
	numberFault
} from './checks';
import { splitHeader, suggestMapping, type ColumnMapping, type HeaderColumn } from './header';
import { planFromMapping, planFromScheme, type PlannedColumn } from './plan';
import { delimiterName, fmt, preview, ProblemList } from './problems';
import { NotText, rows } from './stream';
import type { ParseOptions, ParseResult, Recording } from './types';
import { prepareConversions, toSI, toSIOf, type Conversion } from './units';

const NUM_RE = /^[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?$/;
/** Stored for a cell that already has its own problem (bad text, missing cell), so it is not reported again as a gap. */
const REPORTED = Infinity;

/** A planned column being read: its conversion to SI, its hard limit, its checks and (keepValues) its values. */
interface Target extends PlannedColumn {
	conv: Conversion;
	/** Hard limit of |value| in the column's own unit. */
	limit: number;
	checks: ChannelChecks;
	values: Column | null;
	/** A force-plate column: an empty or NaN cell is refused line by line (blankCellProblem), never a gap. */
	plate: boolean;
	/** For a column the plate leaves empty while unloaded: the target index of the normal force, and the threshold (N). */
	unloaded: { by: number; thresholdN: number } | null;
}

/**
 * A cell's number; NaN for a blank or "NaN" cell (a gap); null for text that is not a number. A well-formed
 * number too large for a double comes back as ±Infinity (see numberFault).
 */
function parseNumber(s: string, decimalComma: boolean): number | null {
	if (s === '' || (s.length === 3 && /^nan$/i.test(s))) return NaN;
	if (decimalComma && s.includes(',')) {
		if (s.includes('.')) return null;
		s = s.replace(',', '.');
	}
	if (!NUM_RE.test(s)) return null;
	return Number(s);
}

/** Digits after the decimal mark of a well-formed number ("0.0083" → 4, "1.5e-3" → 4). */
function decimalsOf(s: string): number {
	const e = s.search(/[eE]/);
	const mant = e < 0 ? s : s.slice(0, e);
	const dot = mant.search(/[.,]/);
	return (dot < 0 ? 0 : mant.length - dot - 1) - (e < 0 ? 0 : Number(s.slice(e + 1)));
}

function nonNumeric(text: string, line: number, delimiter: string): string {
	const commaHint = delimiter === ',' ? '' : ' (a decimal comma is fine in this file, but only one per number and no thousands separators)';
	return `Line ${line} has "${preview(text)}" where a number is expected${commaHint}. Correct the cell, or leave it empty to mark a gap.`;
}

/** A planned column armed for reading: conversion and hard limit from the unit rule, checks, and storage if values are kept. */
function target(c: PlannedColumn, keepValues: boolean, all: PlannedColumn[]): Target {
	const conv = toSIOf(c.channel.kind, c.unit);
	const blank = c.channel.blankWhenUnloaded;
	const by = blank ? all.findIndex((o) => o.channel.name === blank.channel) : -1;
	return {
		...c,
		conv,
		limit: hardLimitOf(c),
		checks: new ChannelChecks(c, conv, c.flip ? -1 : 1),
		values: keepValues ? new Column() : null,
		plate: isPlateKind(c.channel.kind),
		unloaded: blank && by >= 0 ? { by, thresholdN: blank.thresholdN } : null
	};
}

/**
 * The problem of an empty or NaN cell in a force-plate column, or null where it is accepted (a column the plate
 * leaves empty while unloaded, on a line where the normal force is below the threshold). `row` holds the line's
 * numbers of every target in their own units (NaN blank, REPORTED a cell with its own problem).
 */
function blankCellProblem(tg: Target, targets: Target[], row: Float64Array, line: number): string | null {
	const never =
		'force-plate columns are never gap-filled: a plate gives every sample, and a value filled in during a contact would change the joint moments';
	const where = `Line ${line}, column ${tg.index + 1} ("${tg.header}")`;
	if (!tg.unloaded) return `${where} is empty or NaN: ${never}. Re-export the force data with every sample.`;
	const ref = targets[tg.unloaded.by];
	const fz = row[tg.unloaded.by];
	if (fz !== fz || fz === REPORTED) return null; // the normal force's own cell is already reported
	const fzN = Math.abs(toSI(fz, ref.conv));
	if (fzN < tg.unloaded.thresholdN) return null;
	return `${where} is empty or NaN while the plate is loaded (${ref.channel.name} is ${fmt(fzN)} N, at or above the ${fmt(tg.unloaded.thresholdN)} N contact threshold): it may be empty only while the plate is unloaded, and ${never}. Re-export the force data with every sample.`;
}

/**
 * One cell's number (NaN = a gap, REPORTED = a cell with its own problem): into the column's storage when values
 * are kept (checked in one pass at the end, which is faster), otherwise straight into its checks.
 */
function push(tg: Target, v: number): void {
	if (tg.values) tg.values.push(v);
	else tg.checks.push(v);
}

/** Parses a recording; streams through papaparse chunk by chunk and never needs the whole file as one string. */
export async function parseRecording(
	input: AsyncIterable<Uint8Array | string> | string | Uint8Array,
	opts: ParseOptions
): Promise<ParseResult> {
	const file = opts.fileName;
	const problems = new ProblemList(file);
	const fail = (extra?: { headers: string[]; suggested: ColumnMapping }): ParseResult => ({
		ok: false,
		problems: problems.done(),
		...(extra ? { needsMapping: extra } : {})
	});
	let delimiter = ',' as '\t' | ';' | ',';
	let header: HeaderColumn[] | null = null;
	let plan: { timeIndex: number; time: Conversion; targets: Target[]; plates: boolean; row: Float64Array } | null = null;
	const time = new Column();
	const lines = new LineNumbers();
	let timeDecimals = 0;
	let prevTime = NaN;
	let prevTimeLine = 0;
	let lastLine = 0;
	let decimalComma = false;
	let blankLead = 0;
	let timeImpossible = false;
	// The unit conversions (and the mathjs instance behind them) are made before the first row is read. Made at the
	// header, with the first rows in hand, they left the collector promoting rows for the rest of the process, and
	// under tsx (as the worker runs) every parse took about 1.6 times as long: three parses of 120 000 × 26 cells
	// promoted 419 MB instead of 57 MB.
	prepareConversions();
	const iterator = rows(input, (d) => {
		delimiter = d;
		decimalComma = d !== ',';
	});
	try {
		for await (const batch of iterator)
			for (const row of batch) {
				lastLine = row.line;
				if (!header) {
					const cells = row.cells.map((c, i) => (i === 0 ? c.replace(/^\uFEFF/, '') : c));
					if (cells.every((c) => c === '')) {
						blankLead++;
						continue;
					}
					if (blankLead > 0) {
						problems.add({
							row: 1,
							code: 'no-header',
							message: `The first ${blankLead === 1 ? 'line is' : `${blankLead} lines are`} empty; the header (e.g. "time,right.knee.flexion (deg)") must be the first line. Delete the empty lines.`
						});
						return fail();
					}
					if (
						cells.every((c) => {
							const v = parseNumber(c, decimalComma);
							return v !== null && !Number.isNaN(v);
						})
					) {
						problems.add({
							row: 1,
							code: 'no-header',
							message: `The first line is data (${preview(cells.slice(0, 3).join(delimiter === '\t' ? ' ' : delimiter))}), not a header. Add a header line such as "time,right.knee.flexion (deg)".`
						});
						return fail();
					}
					header = cells.map(splitHeader);
					const seen = new Map<string, number>();
					header.forEach((h, i) => {
						if (h.text === '') {
							problems.add({
								row: 1,
								column: '',
								field: `column ${i + 1}`,
								code: 'blank-header',
								message: `Column ${i + 1} has no name in the header; name it, or remove the extra ${delimiterName(delimiter)} at the end of the lines.`
							});
						} else if (seen.has(h.text)) {
							problems.add({
								row: 1,
								column: h.text,
								code: 'duplicate-column',
								message: `Column "${h.text}" appears twice in the header (columns ${seen.get(h.text)! + 1} and ${i + 1}); each column needs its own name.`
							});
						} else seen.set(h.text, i);
					});
					if (problems.hasErrors) return fail();
					const p = opts.mapping ? planFromMapping(header, opts.mapping, opts, problems) : planFromScheme(header, opts, problems);
					if (!p.ok) {
						const headers = header.map((h) => h.text);
						return fail(p.needsMapping ? { headers, suggested: suggestMapping(headers, opts.expected, opts.defaultAngleUnit) } : undefined);
					}
					const targets = p.columns.map((c) => target(c, opts.keepValues !== false, p.columns));
					plan = {
						timeIndex: p.timeIndex,
						time: toSIOf('time', p.timeUnit),
						targets,
						plates: targets.some((tg) => tg.plate),
						row: new Float64Array(targets.length)
					};
					continue;
				}
				const cells = row.cells;
				if (cells.length === 1 && cells[0] === '') continue; // blank line (usually the end of the file)
				const pl = plan!;
				if (cells.length !== header.length) {
					if (row.last && cells.length < header.length) {
						problems.add({
							row: row.line,
							code: 'truncated-last-line',
							message: `The last line has ${cells.length} of ${header.length} cells; the file seems cut short. Upload the complete file, or delete the last line.`
						});
					} else {
						const comma = delimiter === ',' && cells.length > header.length && cells.some((c) => /^\d+$/.test(c));
						problems.add({
							row: row.line,
							code: 'cell-count',
							message: `Line ${row.line} has ${cells.length} cells but the header has ${header.length}.${comma ? ' The file is comma-separated, so a comma cannot also be the decimal mark ("1,25"): write decimals with a point (1.25), or separate the columns with semicolons or tabs.' : ' Every line needs one cell per header column.'}`
						});
					}
				}
				const tText = cells[pl.timeIndex] ?? '';
				const t = parseNumber(tText, decimalComma);
				let tv = NaN;
				const tFault = t === null || Number.isNaN(t) ? null : numberFault(tText, t);
				if (tFault) {
					timeImpossible = true;
					problems.add({
						row: row.line,
						column: header[pl.timeIndex].text,
						code: 'impossible-value',
						message: impossibleMessage(tText, row.line, pl.timeIndex, header[pl.timeIndex].text, tFault)
					});
				} else if (t !== null && !Number.isNaN(t)) {
					tv = toSI(t, pl.time);
					timeDecimals = Math.max(timeDecimals, decimalsOf(tText));
					if (!Number.isNaN(prevTime) && !(tv > prevTime)) {
						problems.add({
							row: row.line,
							column: header[pl.timeIndex].text,
							code: 'time-not-increasing',
							message: `Time ${tText} on line ${row.line} is ${tv === prevTime ? 'the same as' : 'earlier than'} the time on line ${prevTimeLine} (${fmt(prevTime, 8)} s); time must increase strictly from line to line. Sort the rows by time and remove repeated frames.`
						});
					}
					prevTime = tv;
					prevTimeLine = row.line;
				} else if (t !== null) {
					problems.add({
						row: row.line,
						column: header[pl.timeIndex].text,
						code: 'time-blank',
						message: `The time cell on line ${row.line} is empty; every line needs its time.`
					});
				} else {
					problems.add({
						row: row.line,
						column: header[pl.timeIndex].text,
						code: 'non-numeric',
						message: nonNumeric(tText, row.line, delimiter)
					});
				}
				time.push(tv);
				lines.push(row.line);
				const vals = pl.row;
				for (let k = 0; k < pl.targets.length; k++) {
					const target = pl.targets[k];
					const text = cells[target.index];
					vals[k] = REPORTED;
					if (text === undefined) {
						push(target, REPORTED);
						continue;
					}
					const v = parseNumber(text, decimalComma);
					if (v !== null) {
						// a gap (NaN) passes; anything else must be a normal double within the column's hard limit
						const fault = v !== v ? null : (numberFault(text, v) ?? (Math.abs(v) > target.limit ? 'limit' : null));
						if (fault) {
							push(target, REPORTED);
							problems.add({
								row: row.line,
								column: target.header,
								code: 'impossible-value',
								message: impossibleMessage(text, row.line, target.index, target.header, fault, target, v)
							});
						} else {
							vals[k] = v;
							push(target, v);
						}
					} else {
						push(target, REPORTED);
						problems.add({ row: row.line, column: target.header, code: 'non-numeric', message: nonNumeric(text, row.line, delimiter) });
					}
				}
				// force-plate columns take no gaps: each empty cell is refused here, with its line and column
				if (pl.plates)
					for (let k = 0; k < pl.targets.length; k++) {
						if (!pl.targets[k].plate || vals[k] === vals[k]) continue;
						const message = blankCellProblem(pl.targets[k], pl.targets, vals, row.line);
						if (message) problems.add({ row: row.line, column: pl.targets[k].header, code: 'force-blank', message });
					}
			}
	} catch (e) {
		if (e instanceof NotText) {
			problems.add({ code: 'not-text', message: e.message });
			return fail();
		}
		throw e;
	}
	if (!header) {
		problems.add({
			...(blankLead ? { row: 1 } : {}),
			code: 'empty-file',
			message:
				'The file is empty. Upload the exported recording: a header line (e.g. "time,right.knee.flexion (deg)") and one line per sample.'
		});
		return fail();
	}
	const pl = plan!;
	const n = time.n;
	const minSamples = opts.minSamples ?? DEFAULT_MIN_SAMPLES;
	if (n === 0) {
		problems.add({ row: 2, code: 'no-data', message: 'The file has a header but no data lines; export the recording with its samples.' });
		return fail();
	}
	if (n < minSamples) {
		problems.add({
			row: lastLine,
			code: 'too-few-samples',
			message: `The file has ${n} sample${n === 1 ? '' : 's'}; filtering and derivatives need at least ${minSamples}. Upload a longer recording.`
		});
	}
	const t = time.take();
	let sampleHz = NaN;
	if (n >= 2 && !timeImpossible && !problems.has('time-not-increasing') && !problems.has('time-blank') && !problems.has('non-numeric')) {
		sampleHz = checkSampling(
			t,
			lines,
			opts.samplingTolerance ?? DEFAULT_SAMPLING_TOLERANCE,
			toSI(10 ** -timeDecimals, pl.time),
			header[pl.timeIndex].text,
			problems
		);
	}
	const maxGap = opts.maxGapSamples ?? DEFAULT_MAX_GAP_SAMPLES;
	const fill = opts.fillGaps ?? false;
	const channels: Recording['channels'] = [];
	const byName = new Map(pl.targets.map((tg) => [tg.channel.name, tg]));
	for (const e of opts.expected) {
		const tg = byName.get(e.name)!;
		if (!tg.values) {
			tg.checks.report(tg, t, lines, fill, maxGap, problems);
			channels.push({ name: e.name, values: new Float64Array(0) });
			continue;
		}
		let values = tg.values.take();
		for (let i = 0; i < values.length; i++) tg.checks.push(values[i]);
		tg.checks.report(tg, t, lines, fill, maxGap, problems);
		// gaps are bridged in the column's own unit, then every sample is converted to SI and its sign applied
		if (fill && tg.checks.gaps.count > 0) values = fillGaps(values, maxGap).filled;
		const { mul, div } = tg.conv;
		const sign = tg.flip ? -1 : 1;
		for (let i = 0; i < values.length; i++) values[i] = sign * ((values[i] * mul) / div);
		channels.push({ name: e.name, values });
	}
	if (problems.hasErrors) return fail();
	return {
		ok: true,
		recording: { time: t, sampleHz, channels, warnings: problems.done(), header: header.map((h) => h.text), delimiter }
	};
}
