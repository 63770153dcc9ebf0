// The shapes a parse takes and gives: options, the recording, and the problems found on the way.
import type { ColumnMapping } from './header';
import type { AngleUnit, ChannelKind } from './units';

export interface Problem {
	file: string;
	/** 1-based line number in the file; the header is row 1. */
	row?: number;
	/** Header text as in the file. */
	column?: string;
	field?: string;
	code: string;
	message: string;
	severity: 'error' | 'warning';
}

export interface ExpectedChannel {
	name: string;
	/**
	 * angle (rad), position (m), or a force-plate quantity: force (N), moment (N·m) or length (m, a centre of
	 * pressure). Force-plate channels are never gap-filled: an empty or NaN cell is refused with its line and column.
	 */
	kind: ChannelKind;
	/**
	 * Only for a force-plate channel that a plate leaves empty while unloaded (a forces-cop plate's CoP and free
	 * moment): an empty or NaN cell is accepted on a line where |`channel`| (the plate's normal force, N) is below
	 * `thresholdN`, kept as NaN, and refused on any other line.
	 */
	blankWhenUnloaded?: { channel: string; thresholdN: number };
	/** Why the channel is needed, shown when its column is missing ("a forces-moments plate needs …"). */
	need?: string;
}

export interface ParseOptions {
	fileName: string;
	expected: ExpectedChannel[];
	mapping?: ColumnMapping;
	fillGaps?: boolean;
	/** Longest gap (in samples) that gap filling may bridge; default DEFAULT_MAX_GAP_SAMPLES (10) of signal.ts. */
	maxGapSamples?: number;
	/** Fewest samples accepted; default DEFAULT_MIN_SAMPLES (30, at least MIN_SAMPLES_FOR_FILTER of signal.ts). */
	minSamples?: number;
	/** Relative tolerance on the sampling interval; default 0.01. */
	samplingTolerance?: number;
	defaultAngleUnit?: AngleUnit;
	/**
	 * false: check everything but keep no channel values (each channel's `values` comes back empty). Gaps and
	 * ranges are checked on the fly, so memory is a few bytes per sample whatever the number of columns; the
	 * upload uses this and the worker parses the stored bytes again with values. Default true.
	 */
	keepValues?: boolean;
}

export interface Recording {
	time: Float64Array;
	sampleHz: number;
	/** In opts.expected order, SI units (rad, m, N, N·m), sign flips applied. */
	channels: { name: string; values: Float64Array }[];
	warnings: Problem[];
	header: string[];
	delimiter: string;
}

export type ParseResult =
	{ ok: true; recording: Recording } | { ok: false; problems: Problem[]; needsMapping?: { headers: string[]; suggested: ColumnMapping } };
