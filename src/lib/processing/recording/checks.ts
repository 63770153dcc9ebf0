// Checks of a recording: sampling, gaps, the usual range of angles (a warning) and the hard limits no recording
// can exceed (an error). Gaps and the worst sample of a range are followed as the cells stream past
// (ChannelChecks), whether or not the values are kept, so each rule is applied in one place: the gap rule is
// gapBridgeable of signal.ts, the unit rule is units.ts.
import { gapBridgeable, MIN_SAMPLES_FOR_FILTER } from '../signal';
import type { LineNumbers } from './blocks';
import { usualRange } from './layout';
import { fmt, preview, type ProblemList } from './problems';
import type { ExpectedChannel } from './types';
import { convert, fromSI, toSI, toSIOf, type ChannelUnit, type Conversion } from './units';

export const DEFAULT_SAMPLING_TOLERANCE = 0.01;
/** Fewest samples by default: the contract's 30, and never fewer than the filter itself needs. */
export const DEFAULT_MIN_SAMPLES = Math.max(30, MIN_SAMPLES_FOR_FILTER);
/** Margin added on both sides of PHYSIOLOGICAL_RANGES (layout.ts) before warning (common practice: marker and model error). */
export const RANGE_MARGIN_DEG = 20;

/**
 * Hard limits: values no recording of a person can hold, refused (`impossible-value`) rather than warned about.
 * An angle beyond ±720° (two full turns, far past any joint's or base's travel in one trial) or a base position
 * beyond ±100 m from the lab origin is a corrupt cell, a wrong column or a unit error, never a movement. Compared
 * in the column's own unit after conversion (a column in mm against 100 m, a column in rad against 720°).
 */
export const HARD_LIMITS = { angleDeg: 720, positionM: 100, forceN: 100_000, momentNm: 20_000, copM: 100 } as const;
// The force-plate limits are our guards, not a plate's measuring range: a force beyond ±100 kN (about 145 times
// the weight of a 70 kg person, 687 N; landings reach roughly 10 times body weight, from memory), a moment beyond ±20 kN·m (100 kN
// at 0.2 m) or a centre of pressure beyond ±100 m from the plate's origin is a corrupt cell or a unit error.

/** Force-plate quantities: never gap-filled, so an empty or NaN cell is refused (see parse.ts). */
export const isPlateKind = (kind: ExpectedChannel['kind']) => kind === 'force' || kind === 'moment' || kind === 'length';

/** A kind's hard limit of |value| in SI, its SI unit and how the limit reads in a message. */
const LIMIT_OF = {
	angle: { si: 'rad', text: `±${HARD_LIMITS.angleDeg}° (two full turns)` },
	position: { si: 'm', text: `±${HARD_LIMITS.positionM} m from the lab origin` },
	force: { si: 'N', text: `±${HARD_LIMITS.forceN / 1000} kN (our guard for a force on a plate)` },
	moment: { si: 'N·m', text: `±${HARD_LIMITS.momentNm / 1000} kN·m (our guard for a moment on a plate)` },
	length: { si: 'm', text: `±${HARD_LIMITS.copM} m from the plate's origin (our guard for a centre of pressure)` }
} as const;
/**
 * The smallest positive normal IEEE 754 double, 2^−1022 (IEEE 754-2008, binary64: emin = −1022). A non-zero cell
 * that parses below it has lost its digits (a subnormal) or become 0 (e.g. 1e-400): refused as an underflow.
 */
export const SMALLEST_NORMAL = 2 ** -1022;

/** What the checks know of a channel column. */
export interface CheckedColumn {
	index: number;
	header: string;
	channel: ExpectedChannel;
	unit: ChannelUnit;
}

// ---- hard limits ----------------------------------------------------------------------------------

/** Whether a well-formed number's text has a non-zero digit before its exponent ("1e-400" yes, "0.000e-5" no). */
const nonZeroMantissa = (s: string) => /[1-9]/.test(s.replace(/[eE].*$/, ''));

/**
 * Why a parsed number cannot be stored as written: it overflows (±Infinity), or it underflows (a non-zero
 * literal read as 0 or as a subnormal, with lost digits); null when it is a normal double or exactly zero.
 */
export function numberFault(text: string, v: number): 'overflow' | 'underflow' | null {
	if (v === Infinity || v === -Infinity) return 'overflow';
	if (v === 0) return nonZeroMantissa(text) ? 'underflow' : null;
	return Math.abs(v) < SMALLEST_NORMAL ? 'underflow' : null;
}

/** A column's hard limit of |value| in its own unit: HARD_LIMITS by the unit rule (720° = 4π rad, 100 m = 100 000 mm). */
export function hardLimitOf(col: CheckedColumn): number {
	switch (col.channel.kind) {
		case 'angle':
			return convert(HARD_LIMITS.angleDeg, 'deg', col.unit, 'angle');
		case 'position':
			return convert(HARD_LIMITS.positionM, 'm', col.unit, 'position');
		case 'force':
			return convert(HARD_LIMITS.forceN, 'N', col.unit, 'force');
		case 'moment':
			return convert(HARD_LIMITS.momentNm, 'N·m', col.unit, 'moment');
		case 'length':
			return convert(HARD_LIMITS.copM, 'm', col.unit, 'length');
	}
}

export function impossibleMessage(
	text: string,
	line: number,
	index: number,
	header: string,
	fault: 'overflow' | 'underflow' | 'limit',
	col?: CheckedColumn,
	v = NaN
): string {
	const where = `Line ${line}, column ${index + 1} ("${header}")`;
	const cell = `"${preview(text)}"`;
	const fix =
		col && isPlateKind(col.channel.kind)
			? 'Correct the cell in the exported file, or re-export the recording (force-plate columns take no gaps).'
			: 'Correct the cell in the exported file (or leave it empty to mark a gap), or re-export the recording.';
	if (fault === 'overflow')
		return `${where}: ${cell} is too large to be held as a number at all (it overflows to infinity); no recording of a person contains it. ${fix}`;
	if (fault === 'underflow')
		return `${where}: ${cell} is not zero but is smaller than the smallest number held at full precision (about 2.2e-308), so it would be read as 0 or lose its digits (an underflow); no recording of a person contains it. ${fix}`;
	const kind = col!.channel.kind;
	const shown =
		kind === 'angle'
			? `${fmt(convert(v, col!.unit, 'deg', 'angle'))}°`
			: `${fmt(convert(v, col!.unit, LIMIT_OF[kind].si, kind), isPlateKind(kind) ? 7 : 4)} ${LIMIT_OF[kind].si}`;
	const limit = LIMIT_OF[kind].text;
	return `${where}: ${cell} (${col!.unit}) is ${shown}, beyond the hard limit of ${limit} that no recording of a person can exceed: the cell is corrupt, or the column or its unit is wrong. ${fix}`;
}

// ---- sampling -------------------------------------------------------------------------------------

/** Checks every interval against the median interval; returns the mean sampling rate. */
export function checkSampling(
	t: Float64Array,
	lines: LineNumbers,
	tolerance: number,
	printQuantum: number,
	column: string,
	problems: ProblemList
): number {
	const n = t.length;
	const dts = new Float64Array(n - 1);
	for (let i = 1; i < n; i++) dts[i - 1] = t[i] - t[i - 1];
	dts.sort();
	const expected = n % 2 === 0 ? dts[(n - 2) / 2] : (dts[(n - 3) / 2] + dts[(n - 1) / 2]) / 2;
	// Each printed time is rounded to its last digit, so an interval may be off by one unit of that digit.
	const allowed = tolerance * expected + printQuantum;
	for (let i = 1; i < n; i++) {
		const dt = t[i] - t[i - 1];
		if (Math.abs(dt - expected) > allowed) {
			problems.add({
				row: lines.at(i),
				column,
				code: 'sampling-irregular',
				message: `The interval before line ${lines.at(i)} is ${fmt(dt)} s, but the file's usual interval is ${fmt(expected)} s (${fmt(1 / expected)} Hz; allowed ±${fmt(allowed, 2)} s). Frames are missing or doubled here; export the recording at a constant rate.`
			});
		}
	}
	return (n - 1) / (t[n - 1] - t[0]);
}

// ---- gaps and ranges, as the cells pass -----------------------------------------------------------

/** Gaps (runs of NaN) as they pass, in sample indices. */
class GapRuns {
	starts: number[] = [];
	lengths: number[] = [];
	private open = -1;
	step(i: number, blank: boolean): void {
		if (blank) {
			if (this.open < 0) this.open = i;
		} else if (this.open >= 0) {
			this.starts.push(this.open);
			this.lengths.push(i - this.open);
			this.open = -1;
		}
	}
	end(n: number): void {
		this.step(n, false);
	}
	get count(): number {
		return this.starts.length;
	}
}

/** The accepted band of an angle column in rad (the usual range widened by RANGE_MARGIN_DEG), or null if none applies. */
function rangeBand(col: CheckedColumn): { min: number; max: number; lo: number; hi: number } | null {
	const range = usualRange(col.channel.name);
	if (!range || col.channel.kind !== 'angle') return null;
	const deg = toSIOf('angle', 'deg');
	return { ...range, lo: toSI(range.min - RANGE_MARGIN_DEG, deg), hi: toSI(range.max + RANGE_MARGIN_DEG, deg) };
}

/**
 * A channel's gaps and its sample furthest outside the usual band (in SI units, sign applied), followed cell by
 * cell as the file streams, whether the values are kept or not. A cell that already has its own problem is
 * pushed as Infinity: neither a gap nor a range sample.
 */
export class ChannelChecks {
	n = 0;
	readonly gaps = new GapRuns();
	worst = -1;
	worstValue = NaN;
	private excess = 0;
	private readonly lo: number;
	private readonly hi: number;
	/** sign × the conversion to SI; exact for the angle units that have a band (their div is 1). */
	private readonly scale: number;
	private readonly banded: boolean;
	/** False for force-plate channels, whose empty cells parse.ts refuses (or accepts while unloaded) line by line. */
	private readonly tracksGaps: boolean;
	constructor(col: CheckedColumn, conv: Conversion, sign: 1 | -1) {
		const band = rangeBand(col);
		this.tracksGaps = !isPlateKind(col.channel.kind);
		this.banded = band !== null;
		this.lo = band ? band.lo : -Infinity;
		this.hi = band ? band.hi : Infinity;
		this.scale = (sign * conv.mul) / conv.div;
	}
	push(v: number): void {
		const blank = v !== v && this.tracksGaps;
		this.gaps.step(this.n, blank);
		if (this.banded && !blank && v !== Infinity) {
			const x = v * this.scale;
			const e = x < this.lo ? this.lo - x : x > this.hi ? x - this.hi : 0;
			if (e > this.excess) {
				this.excess = e;
				this.worst = this.n;
				this.worstValue = x;
			}
		}
		this.n++;
	}
	/** Reports the channel's gaps and its range warning (call once, after the last sample). */
	report(col: CheckedColumn, t: Float64Array, lines: LineNumbers, fill: boolean, maxGap: number, problems: ProblemList): void {
		this.gaps.end(this.n);
		reportGaps(this.gaps, this.n, col, lines, fill, maxGap, problems);
		reportRange(col, this.worst, this.worstValue, t, lines, problems);
	}
}

/** Reports a channel's gaps: each one refused, or (gap filling on) the bridgeable ones as warnings and the rest refused. */
function reportGaps(
	gaps: GapRuns,
	n: number,
	col: CheckedColumn,
	lines: LineNumbers,
	fill: boolean,
	maxGap: number,
	problems: ProblemList
): void {
	if (gaps.count === 0) return;
	if (!fill) {
		for (let k = 0; k < gaps.count; k++) {
			const i = gaps.starts[k];
			const len = gaps.lengths[k];
			const j = i + len - 1;
			problems.add({
				row: lines.at(i),
				column: col.header,
				code: 'blank-cell',
				message: `${len === 1 ? `The cell on line ${lines.at(i)} is` : `Lines ${lines.at(i)}–${lines.at(j)} (${len} samples) are`} empty or NaN. Fill ${len === 1 ? 'it' : 'them'}, or turn on gap filling (bridges gaps of up to ${maxGap} samples by cubic interpolation).`
			});
		}
		return;
	}
	// the gap rule of fillGaps (signal.ts): a gap touching either end, or longer than maxGap, cannot be bridged
	const tooLong = (k: number) => !gapBridgeable(gaps.starts[k], gaps.lengths[k], n, maxGap);
	for (let k = 0; k < gaps.count; k++) {
		if (!tooLong(k)) continue;
		const start = gaps.starts[k];
		const length = gaps.lengths[k];
		const span = `Lines ${lines.at(start)}–${lines.at(start + length - 1)} (${length} sample${length === 1 ? '' : 's'})`;
		const edge = start === 0 ? 'start' : start + length === n ? 'end' : null;
		problems.add({
			row: lines.at(start),
			column: col.header,
			code: 'gap-too-long',
			message: edge
				? `${span} are empty at the ${edge} of the recording, where there is nothing to interpolate from. Cut the trial to where ${col.header} has values.`
				: `${span} are a gap longer than gap filling bridges (at most ${maxGap} samples). Re-export this stretch, or cut the trial around it.`
		});
	}
	for (let k = 0; k < gaps.count; k++) {
		if (tooLong(k)) continue;
		const start = gaps.starts[k];
		const length = gaps.lengths[k];
		problems.add({
			row: lines.at(start),
			column: col.header,
			code: 'gap-filled',
			severity: 'warning',
			message: `Lines ${lines.at(start)}–${lines.at(start + length - 1)} (${length} sample${length === 1 ? '' : 's'}) were empty and are filled by cubic interpolation.`
		});
	}
}

/** A warning for the sample furthest outside the band, if any. */
function reportRange(col: CheckedColumn, worst: number, value: number, t: Float64Array, lines: LineNumbers, problems: ProblemList): void {
	const range = rangeBand(col);
	if (!range || worst < 0) return;
	problems.add({
		row: lines.at(worst),
		column: col.header,
		code: 'out-of-range',
		severity: 'warning',
		message: `${col.channel.name} reaches ${fmt(fromSI(value, toSIOf('angle', 'deg')))}° at line ${lines.at(worst)} (time ${fmt(t[worst])} s), outside the usual ${range.min}° to ${range.max}° by more than ${RANGE_MARGIN_DEG}°. Check the unit (deg or rad), the sign and the column; the file is accepted.`
	});
}
