// Reads a joint-angle recording (delimited text, streamed chunk by chunk) into SI channels, or says precisely what is wrong with it.
import Papa from 'papaparse';
import { z } from 'zod';
import { fillGaps, MIN_SAMPLES_FOR_FILTER } from './signal';

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
	kind: 'angle' | 'position';
}

const mappedColumnSchema = z.object({
	channel: z.string().min(1).nullable(),
	unit: z.enum(['deg', 'rad', 'm', 'mm'], { error: 'unit must be deg, rad, m or mm' }),
	flip: z.boolean()
});
/** How the columns of a file from another system become our channels (stored by the server as presets, as this JSON). */
export const columnMappingSchema = z.object({
	timeColumn: z.string().min(1, 'choose the time column'),
	timeUnit: z.enum(['s', 'ms'], { error: 'time unit must be s or ms' }),
	columns: z.record(z.string(), mappedColumnSchema)
});
export type ColumnMapping = z.infer<typeof columnMappingSchema>;

export interface ParseOptions {
	fileName: string;
	expected: ExpectedChannel[];
	mapping?: ColumnMapping;
	fillGaps?: boolean;
	/** Longest gap (in samples) that gap filling may bridge; default 10. */
	maxGapSamples?: number;
	/** Fewest samples accepted; default DEFAULT_MIN_SAMPLES (30, at least MIN_SAMPLES_FOR_FILTER of signal.ts). */
	minSamples?: number;
	/** Relative tolerance on the sampling interval; default 0.01. */
	samplingTolerance?: number;
	defaultAngleUnit?: 'deg' | 'rad';
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
	/** In opts.expected order, SI units (rad, m), sign flips applied. */
	channels: { name: string; values: Float64Array }[];
	warnings: Problem[];
	header: string[];
	delimiter: string;
}

export type ParseResult =
	| { ok: true; recording: Recording }
	| { ok: false; problems: Problem[]; needsMapping?: { headers: string[]; suggested: ColumnMapping } };

/** At most this many problems of one code are listed; the rest are counted in one summary line. */
export const MAX_PROBLEMS_PER_CODE = 20;
export const DEFAULT_MAX_GAP_SAMPLES = 10;
export const DEFAULT_SAMPLING_TOLERANCE = 0.01;
/** Fewest samples by default: the contract's 30, and never fewer than the filter itself needs. */
export const DEFAULT_MIN_SAMPLES = Math.max(30, MIN_SAMPLES_FOR_FILTER);

/**
 * Usual ranges of motion per DOF (°), in our sign rules (positive = flexion, abduction/adduction as
 * named, internal rotation, dorsiflexion, inversion, pronation, ulnar deviation; negative = the opposite motion).
 * Common practice, from memory: typical clinical range-of-motion references (normal values as tabulated in
 * goniometry handbooks and orthopaedic society tables). Values outside [min − margin, max + margin] give a
 * warning, never a rejection: athletes, patients and marker errors all produce them, and a person judges.
 */
export const PHYSIOLOGICAL_RANGES: Record<string, { min: number; max: number }> = {
	'hip.flexion': { min: -30, max: 125 },
	'hip.adduction': { min: -45, max: 30 },
	'hip.internalRotation': { min: -50, max: 45 },
	'knee.flexion': { min: -10, max: 150 },
	'ankle.dorsiflexion': { min: -50, max: 25 },
	'ankle.inversion': { min: -20, max: 35 },
	'shoulder.flexion': { min: -60, max: 180 },
	'shoulder.abduction': { min: -30, max: 180 },
	'shoulder.internalRotation': { min: -90, max: 70 },
	'elbow.flexion': { min: -10, max: 150 },
	// Our zero is the anatomical posture (palm forward, i.e. supinated), while clinics measure ±80° about
	// thumb-up; the range covers both zeros.
	'forearm.pronation': { min: -90, max: 170 },
	'wrist.flexion': { min: -70, max: 80 },
	'wrist.ulnarDeviation': { min: -20, max: 35 }
};
/** Margin added on both sides of PHYSIOLOGICAL_RANGES before warning (common practice: marker and model error). */
export const RANGE_MARGIN_DEG = 20;

/**
 * Hard limits: values no recording of a person can hold, refused (`impossible-value`) rather than warned about.
 * An angle beyond ±720° (two full turns, far past any joint's or base's travel in one trial) or a base position
 * beyond ±100 m from the lab origin is a corrupt cell, a wrong column or a unit error, never a movement. Compared
 * in the column's own unit after conversion (a column in mm against 100 m, a column in rad against 720°).
 */
export const HARD_LIMITS = { angleDeg: 720, positionM: 100 } as const;
/**
 * The smallest positive normal IEEE 754 double, 2^−1022 (IEEE 754-2008, binary64: emin = −1022). A non-zero cell
 * that parses below it has lost its digits (a subnormal) or become 0 (e.g. 1e-400): refused as an underflow.
 */
export const SMALLEST_NORMAL = 2 ** -1022;

export const BASE_LIMBS = ['right.arm', 'left.arm', 'right.leg', 'left.leg'] as const;
export const BASE_POSITION_AXES = ['px', 'py', 'pz'] as const;
export const BASE_ANGLE_AXES = ['rx', 'ry', 'rz'] as const;

const DOF_RE = /^(right|left)\.(hip|knee|ankle|shoulder|elbow|forearm|wrist)\.([A-Za-z]+)$/;
const BASE_RE = /^(right|left)\.(arm|leg)\.base\.(px|py|pz|rx|ry|rz)$/;
const SUFFIX_RE = /^(.*?)\s*\(\s*([^()]*?)\s*\)$/;
const NUM_RE = /^[+-]?(?:\d+(?:\.\d*)?|\.\d+)(?:[eE][+-]?\d+)?$/;
const DEG = Math.PI / 180;
const TEXT_PREVIEW = 24;
/** Stored for a cell that already has its own problem (bad text, missing cell), so it is not reported again as a gap. */
const REPORTED = Infinity;

/** Whether a name belongs to our column scheme (a known DOF or a base column), whatever the session expects. */
export function isSchemeName(name: string): boolean {
	const m = DOF_RE.exec(name);
	if (m) return `${m[2]}.${m[3]}` in PHYSIOLOGICAL_RANGES;
	return BASE_RE.test(name);
}

/** The channel kind our scheme gives a name (base px/py/pz are positions, everything else an angle). */
export function schemeKind(name: string): 'angle' | 'position' {
	return /\.base\.p[xyz]$/.test(name) ? 'position' : 'angle';
}

class ProblemList {
	readonly items: Problem[] = [];
	private counts = new Map<string, number>();
	constructor(private file: string) {}
	add(p: Omit<Problem, 'file' | 'severity'> & { severity?: Problem['severity'] }): void {
		const n = (this.counts.get(p.code) ?? 0) + 1;
		this.counts.set(p.code, n);
		if (n <= MAX_PROBLEMS_PER_CODE) this.items.push({ file: this.file, severity: 'error', ...p });
	}
	get hasErrors(): boolean {
		return this.items.some((p) => p.severity === 'error');
	}
	has(code: string): boolean {
		return this.counts.has(code);
	}
	/** The list with one "and N more" line per code that overflowed. */
	done(): Problem[] {
		const out = [...this.items];
		for (const [code, n] of this.counts) {
			if (n > MAX_PROBLEMS_PER_CODE) {
				const first = this.items.find((p) => p.code === code)!;
				out.push({ file: this.file, code, severity: first.severity, message: `…and ${n - MAX_PROBLEMS_PER_CODE} more problems of this kind (${code}) not listed.` });
			}
		}
		return out;
	}
}

/**
 * Float64 storage in fixed blocks, so a long file never becomes a JS array of numbers and never needs the
 * doubling copy (old + new buffer at once); take() copies block by block into one exact-length array.
 */
const BLOCK = 1 << 15;
class Column {
	private blocks: Float64Array[] = [];
	private last = new Float64Array(BLOCK);
	private fill = 0;
	n = 0;
	push(v: number): void {
		if (this.fill === BLOCK) {
			this.blocks.push(this.last);
			this.last = new Float64Array(BLOCK);
			this.fill = 0;
		}
		this.last[this.fill++] = v;
		this.n++;
	}
	take(): Float64Array {
		const out = new Float64Array(this.n);
		let at = 0;
		for (const b of this.blocks) {
			out.set(b, at);
			at += BLOCK;
		}
		out.set(this.last.subarray(0, this.fill), at);
		this.blocks = [];
		this.last = new Float64Array(0);
		return out;
	}
}

/** Line numbers of samples (blank lines make them differ from index + 2), in blocks like Column. */
class LineNumbers {
	private blocks: Uint32Array[] = [new Uint32Array(BLOCK)];
	n = 0;
	push(v: number): void {
		const k = Math.floor(this.n / BLOCK);
		if (k === this.blocks.length) this.blocks.push(new Uint32Array(BLOCK));
		this.blocks[k][this.n % BLOCK] = v;
		this.n++;
	}
	at(i: number): number {
		return this.blocks[Math.floor(i / BLOCK)][i % BLOCK];
	}
}

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

/**
 * What validation needs of a channel without its values: the gaps, and the sample furthest outside the
 * physiological range (in SI units, sign applied). Takes the place of a Column when values are not kept.
 */
class ChannelScan {
	n = 0;
	readonly gaps = new GapRuns();
	worst = -1;
	worstValue = NaN;
	private excess = 0;
	constructor(
		private scale: number,
		private lo: number,
		private hi: number
	) {}
	push(v: number): void {
		const blank = Number.isNaN(v);
		this.gaps.step(this.n, blank);
		if (!blank && Number.isFinite(v)) {
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
}

const preview = (s: string) => (s.length > TEXT_PREVIEW ? `${s.slice(0, TEXT_PREVIEW)}…` : s);
const fmt = (x: number, digits = 4) => (Number.isFinite(x) ? String(Number(x.toPrecision(digits))) : String(x));
const delimiterName = (d: string) => (d === ',' ? 'comma' : d === ';' ? 'semicolon' : 'tab');

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

/** Whether a well-formed number's text has a non-zero digit before its exponent ("1e-400" yes, "0.000e-5" no). */
const nonZeroMantissa = (s: string) => /[1-9]/.test(s.replace(/[eE].*$/, ''));

/**
 * Why a parsed number cannot be stored as written: it overflows (±Infinity), or it underflows (a non-zero
 * literal read as 0 or as a subnormal, with lost digits); null when it is a normal double or exactly zero.
 */
function numberFault(text: string, v: number): 'overflow' | 'underflow' | null {
	if (v === Infinity || v === -Infinity) return 'overflow';
	if (v === 0) return nonZeroMantissa(text) ? 'underflow' : null;
	return Math.abs(v) < SMALLEST_NORMAL ? 'underflow' : null;
}

/** Digits after the decimal mark of a well-formed number ("0.0083" → 4, "1.5e-3" → 4). */
function decimalsOf(s: string): number {
	const e = s.search(/[eE]/);
	const mant = e < 0 ? s : s.slice(0, e);
	const dot = mant.search(/[.,]/);
	return (dot < 0 ? 0 : mant.length - dot - 1) - (e < 0 ? 0 : Number(s.slice(e + 1)));
}

/** Delimiter of the header line: tab, semicolon or comma, whichever occurs most outside quotes (ties in that order). */
export function detectDelimiter(headerLine: string): '\t' | ';' | ',' {
	const counts = { '\t': 0, ';': 0, ',': 0 };
	let quoted = false;
	for (const ch of headerLine) {
		if (ch === '"') quoted = !quoted;
		else if (!quoted && (ch === '\t' || ch === ';' || ch === ',')) counts[ch]++;
	}
	let best: '\t' | ';' | ',' = ',';
	for (const d of ['\t', ';', ','] as const) if (counts[d] > counts[best] || (counts[d] === counts[best] && counts[d] > 0 && best === ',')) best = d;
	return best;
}

interface HeaderColumn {
	text: string;
	name: string;
	unit?: string;
}

function splitHeader(text: string): HeaderColumn {
	const m = SUFFIX_RE.exec(text);
	return m ? { text, name: m[1], unit: m[2] } : { text, name: text };
}

const isTimeName = (name: string) => name.toLowerCase() === 'time';

// ---- suggestions for the mapping step -------------------------------------------------------------

const SIDE_WORDS: Record<string, string[]> = { right: ['right', 'r', 'rt', 'rgt'], left: ['left', 'l', 'lt', 'lft'] };
const JOINT_WORDS: Record<string, string[]> = {
	hip: ['hip'],
	knee: ['knee', 'kne'],
	ankle: ['ankle', 'ank'],
	shoulder: ['shoulder', 'shoulder', 'shld', 'sho', 'shou'],
	elbow: ['elbow', 'elb'],
	forearm: ['forearm', 'fore', 'radioulnar'],
	wrist: ['wrist', 'wri', 'wr']
};
const MOTION_WORDS: Record<string, string[][]> = {
	flexion: [['flexion'], ['flex'], ['flx'], ['fl']],
	adduction: [['adduction'], ['add'], ['adduct']],
	abduction: [['abduction'], ['abd'], ['abduct']],
	internalRotation: [['internalrotation'], ['internal', 'rotation'], ['int', 'rot'], ['introt'], ['ir'], ['rotation'], ['rot']],
	dorsiflexion: [['dorsiflexion'], ['dorsi'], ['df'], ['dorsiflex']],
	inversion: [['inversion'], ['inv']],
	pronation: [['pronation'], ['pron'], ['pro']],
	ulnarDeviation: [['ulnardeviation'], ['ulnar'], ['ud'], ['ulnar', 'dev']]
};
const UNIT_WORDS = new Set(['deg', 'degree', 'degrees', 'rad', 'rads', 'radian', 'radians', 'mm', 'm', 's', 'sec', 'ms']);

function tokens(text: string): string[] {
	return text
		.replace(/([a-z])([A-Z])/g, '$1 $2')
		.toLowerCase()
		.split(/[^a-z0-9]+/)
		.filter(Boolean);
}

/** The expected channel a foreign header most likely means, or null; a person confirms it in the mapping step. */
export function suggestChannel(header: string, expected: readonly ExpectedChannel[]): string | null {
	const raw = splitHeader(header.trim()).name;
	const exact = expected.find((e) => e.name.toLowerCase() === raw.toLowerCase());
	if (exact) return exact.name;
	const t = tokens(raw).filter((w) => !UNIT_WORDS.has(w) || w === 'm');
	const joined = t.join('');
	let best: { name: string; score: number } | null = null;
	for (const e of expected) {
		let score = 0;
		const base = BASE_RE.exec(e.name);
		if (base) {
			const [, side, limb, axis] = base;
			if (!SIDE_WORDS[side].some((w) => t.includes(w))) continue;
			if (!t.includes(limb)) continue;
			if (!t.includes('base')) continue;
			if (!(t.includes(axis) || joined.endsWith(axis))) continue;
			score = 3;
		} else {
			const m = DOF_RE.exec(e.name);
			if (!m) continue;
			const [, side, joint, motion] = m;
			if (!SIDE_WORDS[side].some((w) => t.includes(w) || joined.startsWith(w + joint))) continue;
			if (!JOINT_WORDS[joint].some((w) => t.includes(w) || joined.includes(w))) continue;
			const variants = MOTION_WORDS[motion] ?? [[motion.toLowerCase()]];
			const hit = variants.findIndex((v) => v.every((w) => t.includes(w)) || (v.length === 1 && v[0].length > 3 && joined.includes(v[0])));
			if (hit < 0) continue;
			score = 3 - hit / 10;
		}
		if (!best || score > best.score) best = { name: e.name, score };
	}
	return best?.name ?? null;
}

function guessUnit(header: string, kind: 'angle' | 'position' | undefined, fallback: 'deg' | 'rad'): 'deg' | 'rad' | 'm' | 'mm' {
	const t = tokens(header);
	if (kind === 'position') return t.includes('mm') ? 'mm' : 'm';
	if (t.some((w) => w.startsWith('rad'))) return 'rad';
	if (t.some((w) => w.startsWith('deg'))) return 'deg';
	return fallback;
}

/** A starting mapping for the mapping step: best guesses only, every one confirmed by a person. */
export function suggestMapping(headers: readonly string[], expected: readonly ExpectedChannel[], defaultAngleUnit: 'deg' | 'rad' = 'deg'): ColumnMapping {
	const timeIdx = Math.max(
		0,
		headers.findIndex((h) => {
			const t = tokens(h);
			return t[0] === 'time' || t[0] === 't' || t[0] === 'seconds' || t[0] === 'sec';
		})
	);
	const timeColumn = headers[timeIdx] ?? '';
	const timeUnit: 's' | 'ms' = tokens(timeColumn).includes('ms') ? 'ms' : 's';
	const used = new Set<string>();
	const columns: ColumnMapping['columns'] = {};
	headers.forEach((h, i) => {
		if (i === timeIdx) return;
		let channel = suggestChannel(h, expected);
		if (channel && used.has(channel)) channel = null;
		if (channel) used.add(channel);
		const kind = channel ? expected.find((e) => e.name === channel)?.kind : undefined;
		columns[h] = { channel, unit: guessUnit(h, kind, defaultAngleUnit), flip: false };
	});
	return { timeColumn, timeUnit, columns };
}

// ---- streaming text -------------------------------------------------------------------------------

const PIECE = 1 << 16;

async function* pieces(input: AsyncIterable<Uint8Array | string> | string | Uint8Array): AsyncGenerator<Uint8Array | string> {
	if (typeof input === 'string' || input instanceof Uint8Array) {
		// Papa's parser would turn one huge piece into one huge array of rows; feed it in slices instead.
		for (let i = 0; i < input.length; i += PIECE) yield typeof input === 'string' ? input.slice(i, i + PIECE) : input.subarray(i, i + PIECE);
		return;
	}
	for await (const chunk of input) {
		if (chunk.length <= 4 * PIECE) yield chunk;
		else for (let i = 0; i < chunk.length; i += PIECE) yield typeof chunk === 'string' ? chunk.slice(i, i + PIECE) : chunk.subarray(i, i + PIECE);
	}
}

class NotText extends Error {}

/** Decodes UTF-8 incrementally and refuses binary or UTF-16 content. */
async function* texts(input: AsyncIterable<Uint8Array | string> | string | Uint8Array): AsyncGenerator<string> {
	const decoder = new TextDecoder('utf-8', { fatal: true, ignoreBOM: true });
	const head: number[] = [];
	let first = true;
	for await (let piece of pieces(input)) {
		let text: string;
		if (typeof piece === 'string') text = piece;
		else {
			if (head.length < 2) {
				// A UTF-16 byte-order mark must be recognised even when it arrives one byte at a time.
				const before = head.length;
				for (let i = 0; i < piece.length && head.length < 2; i++) head.push(piece[i]);
				if (head.length < 2) continue;
				if ((head[0] === 0xff && head[1] === 0xfe) || (head[0] === 0xfe && head[1] === 0xff)) {
					throw new NotText('The file is UTF-16 text; save it as UTF-8 (with or without BOM) and upload it again.');
				}
				if (before > 0) {
					const joined = new Uint8Array(before + piece.length);
					joined.set(head.slice(0, before));
					joined.set(piece, before);
					piece = joined;
				}
			}
			try {
				text = decoder.decode(piece, { stream: true });
			} catch {
				throw new NotText('The file is not UTF-8 text (it contains bytes that are not valid UTF-8; is it a binary export or a spreadsheet file?). Export the recording as delimited text in UTF-8.');
			}
		}
		if (first && text.length > 0) {
			if (text.charCodeAt(0) === 0xfeff) text = text.slice(1);
			first = false;
		}
		if (text.includes('\0')) {
			throw new NotText('The file contains NUL bytes, so it is binary data or UTF-16 text, not a UTF-8 text file. Export the recording as delimited text in UTF-8.');
		}
		if (text) yield text;
	}
	try {
		const rest = head.length === 1 ? decoder.decode(new Uint8Array(head)) : decoder.decode();
		if (rest) yield rest;
	} catch {
		throw new NotText('The file ends in the middle of a UTF-8 character (is it cut short or binary?). Export the recording again as UTF-8 text.');
	}
}

/**
 * Every line end as "\n": CRLF, a lone CR (old Mac exports, or lines added on another system) and LF each end one
 * line, also in one file together. A CR at the end of a piece waits to see whether the next piece starts with the
 * LF of the same CRLF pair.
 */
async function* unixLines(input: AsyncIterable<string>): AsyncGenerator<string> {
	let afterCR = false;
	for await (let text of input) {
		if (afterCR && text.charCodeAt(0) === 10) text = text.slice(1);
		if (!text) continue;
		afterCR = text.charCodeAt(text.length - 1) === 13;
		yield text.includes('\r') ? text.replace(/\r\n?/g, '\n') : text;
	}
}

interface Row {
	line: number;
	cells: string[];
	last: boolean;
}

/** Rows with their line numbers, parsed by papaparse chunk by chunk (one batch per chunk); the header line picks the delimiter. */
async function* rows(input: AsyncIterable<Uint8Array | string> | string | Uint8Array, onDelimiter: (d: '\t' | ';' | ',') => void): AsyncGenerator<Row[]> {
	let buffered = '';
	let parser: Papa.Parser | null = null;
	let line = 0;
	let pendingRow: string[] | null = null;
	const emit = (data: string[][], finished: boolean): Row[] => {
		const out: Row[] = [];
		for (const cells of data) {
			if (pendingRow) out.push({ line, cells: pendingRow, last: false });
			line++;
			for (let i = 0; i < cells.length; i++) cells[i] = cells[i].trim();
			pendingRow = cells;
		}
		if (finished && pendingRow) {
			out.push({ line, cells: pendingRow, last: true });
			pendingRow = null;
		}
		return out;
	};
	const start = (finished: boolean): boolean => {
		const nl = buffered.indexOf('\n');
		if (nl < 0 && !finished) {
			if (buffered.length > 1 << 20) throw new NotText('The first line is longer than 1 MiB without a line break; this is not a recording file with a header line.');
			return false;
		}
		const headerLine = nl < 0 ? buffered : buffered.slice(0, nl);
		const delimiter = detectDelimiter(headerLine);
		onDelimiter(delimiter);
		parser = new Papa.Parser({ delimiter, newline: '\n', quoteChar: '"' });
		return true;
	};
	const feed = (finished: boolean): string[][] => {
		const res = parser!.parse(buffered, 0, !finished) as { data: string[][]; meta: { cursor: number } };
		buffered = finished ? '' : buffered.slice(res.meta.cursor);
		return res.data;
	};
	for await (const text of unixLines(texts(input))) {
		buffered += text;
		if (!parser && !start(false)) continue;
		const batch = emit(feed(false), false);
		if (batch.length) yield batch;
	}
	if (!parser) {
		if (buffered.trim() === '') return;
		start(true);
	}
	yield emit(feed(true), true);
}

// ---- the parse ------------------------------------------------------------------------------------

interface Target {
	index: number;
	header: string;
	channel: ExpectedChannel;
	unit: 'deg' | 'rad' | 'm' | 'mm';
	flip: boolean;
	data: Column | ChannelScan;
	/** Hard limit of |value| in the column's own unit (set once the header is read). */
	limit?: number;
}

type Plan =
	| { ok: true; timeIndex: number; timeUnit: 's' | 'ms'; targets: Target[] }
	| { ok: false; needsMapping?: boolean };

function planFromScheme(header: HeaderColumn[], opts: ParseOptions, problems: ProblemList): Plan {
	const expected = new Map(opts.expected.map((e) => [e.name, e]));
	const times = header.map((h, i) => ({ h, i })).filter(({ h }) => isTimeName(h.name));
	let needsMapping = false;
	let timeIndex = -1;
	let timeUnit: 's' | 'ms' = 's';
	if (times.length === 0) {
		const near = header.find((h) => /^time\b|^t$/i.test(h.name) || /\btime\b/i.test(h.text));
		problems.add({
			row: 1,
			code: 'no-time-column',
			message: `There is no time column. Name it "time" (seconds), "time (s)" or "time (ms)"${near ? `; "${near.text}" is not one of these, so map it in the mapping step` : ''}.`
		});
		needsMapping = true;
	} else if (times.length > 1) {
		problems.add({
			row: 1,
			column: times[1].h.text,
			code: 'duplicate-time-column',
			message: `There are ${times.length} time columns (${times.map((t) => `"${t.h.text}"`).join(', ')}); keep one, or map the others to "ignore".`
		});
		needsMapping = true;
	} else {
		const t = times[0];
		timeIndex = t.i;
		if (t.h.unit === undefined || t.h.unit === 's') timeUnit = 's';
		else if (t.h.unit === 'ms') timeUnit = 'ms';
		else {
			problems.add({ row: 1, column: t.h.text, code: 'unit-unsupported', message: `Unknown time unit "${t.h.unit}" in "${t.h.text}"; use "time (s)" or "time (ms)".` });
		}
	}
	const targets: Target[] = [];
	header.forEach((h, i) => {
		if (isTimeName(h.name)) return;
		const channel = expected.get(h.name);
		if (!channel) {
			const hint = isSchemeName(h.name)
				? `it is one of our channel names, but this session's model does not use it (expected: ${opts.expected.map((e) => e.name).join(', ')}); remove the column or map it to "ignore"`
				: `it is not a channel name of our layout (<side>.<joint>.<motion>, e.g. right.knee.flexion); rename it or match it to a channel in the mapping step`;
			problems.add({ row: 1, column: h.text, code: 'unknown-column', message: `Column "${h.text}" maps to no channel: ${hint}.` });
			needsMapping = true;
			return;
		}
		let unit: Target['unit'] | undefined;
		if (channel.kind === 'angle') {
			if (h.unit === 'deg' || h.unit === 'rad') unit = h.unit;
			else if (h.unit !== undefined) {
				problems.add({ row: 1, column: h.text, code: 'unit-unsupported', message: `Unknown unit "${h.unit}" in "${h.text}"; angle columns take " (deg)" or " (rad)".` });
			} else if (opts.defaultAngleUnit) unit = opts.defaultAngleUnit;
			else {
				problems.add({ row: 1, column: h.text, code: 'unit-unknown', message: `Column "${h.text}" has no unit; choose degrees or radians for the file, or name the column "${h.name} (deg)" or "${h.name} (rad)".` });
			}
		} else {
			if (h.unit === 'm' || h.unit === 'mm') unit = h.unit;
			else if (h.unit !== undefined) {
				problems.add({ row: 1, column: h.text, code: 'unit-unsupported', message: `Unknown unit "${h.unit}" in "${h.text}"; position columns take " (m)" or " (mm)".` });
			} else {
				problems.add({ row: 1, column: h.text, code: 'unit-unknown', message: `Column "${h.text}" has no unit; name it "${h.name} (m)" or "${h.name} (mm)", or give the unit in the mapping step.` });
			}
		}
		if (unit) targets.push({ index: i, header: h.text, channel, unit, flip: false, data: new Column() });
	});
	if (!needsMapping) missingChannels(header, opts, targets, problems, undefined, new Set(header.map((h) => h.name)));
	return problems.hasErrors ? { ok: false, needsMapping } : { ok: true, timeIndex, timeUnit, targets };
}

function missingChannels(header: HeaderColumn[], opts: ParseOptions, targets: Target[], problems: ProblemList, mapping?: ColumnMapping, present?: Set<string>): void {
	// A channel whose column is there but has its own problem (e.g. its unit) is not reported missing too.
	const have = new Set([...targets.map((t) => t.channel.name), ...(present ?? [])]);
	for (const e of opts.expected) {
		if (have.has(e.name)) continue;
		const fromMapping = mapping && Object.entries(mapping.columns).find(([, c]) => c.channel === e.name);
		problems.add({
			row: 1,
			field: e.name,
			code: 'missing-channel',
			message: fromMapping
				? `Channel ${e.name} is missing: the mapping takes it from column "${fromMapping[0]}", which this file does not have.`
				: `Channel ${e.name} is missing: this session's model needs it. Add a column "${e.name}${e.kind === 'angle' ? ' (deg)' : ' (m)'}"${header.length ? ' or match an existing column to it in the mapping step' : ''}.`
		});
	}
}

function planFromMapping(header: HeaderColumn[], raw: unknown, opts: ParseOptions, problems: ProblemList): Plan {
	const parsed = columnMappingSchema.safeParse(raw);
	if (!parsed.success) {
		for (const issue of parsed.error.issues) {
			problems.add({ field: ['mapping', ...issue.path].join('.'), code: 'mapping-invalid', message: `The column mapping is not valid at ${['mapping', ...issue.path].join('.')}: ${issue.message}.` });
		}
		return { ok: false };
	}
	const mapping = parsed.data;
	const expected = new Map(opts.expected.map((e) => [e.name, e]));
	const timeIndex = header.findIndex((h) => h.text === mapping.timeColumn);
	if (timeIndex < 0) {
		problems.add({ row: 1, field: 'mapping.timeColumn', code: 'mapping-column-missing', message: `The mapping takes time from column "${mapping.timeColumn}", which this file does not have (its columns: ${header.map((h) => `"${h.text}"`).join(', ')}).` });
	}
	const targets: Target[] = [];
	const taken = new Map<string, string>();
	header.forEach((h, i) => {
		if (i === timeIndex) return;
		const c = mapping.columns[h.text];
		if (!c) {
			problems.add({ row: 1, column: h.text, code: 'unknown-column', message: `Column "${h.text}" maps to no channel: the mapping does not mention it. Match it to a channel or to "ignore".` });
			return;
		}
		if (c.channel === null) return;
		const channel = expected.get(c.channel);
		if (!channel) {
			problems.add({ row: 1, column: h.text, code: 'mapping-unknown-channel', message: `The mapping sends column "${h.text}" to "${c.channel}", which this session's model does not use (expected: ${opts.expected.map((e) => e.name).join(', ')}).` });
			return;
		}
		const prev = taken.get(channel.name);
		if (prev !== undefined) {
			problems.add({ row: 1, column: h.text, code: 'mapping-duplicate-channel', message: `Columns "${prev}" and "${h.text}" are both mapped to ${channel.name}; map one of them to "ignore".` });
			return;
		}
		taken.set(channel.name, h.text);
		const fits = channel.kind === 'angle' ? c.unit === 'deg' || c.unit === 'rad' : c.unit === 'm' || c.unit === 'mm';
		if (!fits) {
			problems.add({ row: 1, column: h.text, code: 'mapping-unit-mismatch', message: `Column "${h.text}" is mapped to ${channel.name}, an ${channel.kind === 'angle' ? 'angle (deg or rad)' : 'position (m or mm)'}, but its unit is set to ${c.unit}.` });
			return;
		}
		targets.push({ index: i, header: h.text, channel, unit: c.unit, flip: c.flip, data: new Column() });
	});
	missingChannels(header, opts, targets, problems, mapping);
	return problems.hasErrors ? { ok: false } : { ok: true, timeIndex, timeUnit: mapping.timeUnit, targets };
}

const toSI = (unit: Target['unit']) => (unit === 'deg' ? (v: number) => v * DEG : unit === 'mm' ? (v: number) => v / 1000 : (v: number) => v);

/** Parses a recording; streams through papaparse chunk by chunk and never needs the whole file as one string. */
export async function parseRecording(input: AsyncIterable<Uint8Array | string> | string | Uint8Array, opts: ParseOptions): Promise<ParseResult> {
	const file = opts.fileName;
	const problems = new ProblemList(file);
	const fail = (extra?: { headers: string[]; suggested: ColumnMapping }): ParseResult => ({ ok: false, problems: problems.done(), ...(extra ? { needsMapping: extra } : {}) });
	let delimiter = ',' as '\t' | ';' | ',';
	let header: HeaderColumn[] | null = null;
	let plan: Extract<Plan, { ok: true }> | null = null;
	const time = new Column();
	const lines = new LineNumbers();
	let timeDecimals = 0;
	let prevTime = NaN;
	let prevTimeLine = 0;
	let lastLine = 0;
	let decimalComma = false;
	let blankLead = 0;
	let timeImpossible = false;
	const iterator = rows(input, (d) => {
		delimiter = d;
		decimalComma = d !== ',';
	});
	try {
		for await (const batch of iterator) for (const row of batch) {
			lastLine = row.line;
			if (!header) {
				const cells = row.cells.map((c, i) => (i === 0 ? c.replace(/^\uFEFF/, '') : c));
				if (cells.every((c) => c === '')) {
					blankLead++;
					continue;
				}
				if (blankLead > 0) {
					problems.add({ row: 1, code: 'no-header', message: `The first ${blankLead === 1 ? 'line is' : `${blankLead} lines are`} empty; the header (e.g. "time,right.knee.flexion (deg)") must be the first line. Delete the empty lines.` });
					return fail();
				}
				if (cells.every((c) => { const v = parseNumber(c, decimalComma); return v !== null && !Number.isNaN(v); })) {
					problems.add({ row: 1, code: 'no-header', message: `The first line is data (${preview(cells.slice(0, 3).join(delimiter === '\t' ? ' ' : delimiter))}), not a header. Add a header line such as "time,right.knee.flexion (deg)".` });
					return fail();
				}
				header = cells.map(splitHeader);
				const seen = new Map<string, number>();
				header.forEach((h, i) => {
					if (h.text === '') {
						problems.add({ row: 1, column: '', field: `column ${i + 1}`, code: 'blank-header', message: `Column ${i + 1} has no name in the header; name it, or remove the extra ${delimiterName(delimiter)} at the end of the lines.` });
					} else if (seen.has(h.text)) {
						problems.add({ row: 1, column: h.text, code: 'duplicate-column', message: `Column "${h.text}" appears twice in the header (columns ${seen.get(h.text)! + 1} and ${i + 1}); each column needs its own name.` });
					} else seen.set(h.text, i);
				});
				if (problems.hasErrors) return fail();
				const p = opts.mapping ? planFromMapping(header, opts.mapping, opts, problems) : planFromScheme(header, opts, problems);
				if (!p.ok) {
					const headers = header.map((h) => h.text);
					return fail(p.needsMapping ? { headers, suggested: suggestMapping(headers, opts.expected, opts.defaultAngleUnit) } : undefined);
				}
				plan = p;
				for (const tg of p.targets) tg.limit = hardLimitOf(tg);
				if (opts.keepValues === false) {
					for (const tg of p.targets) {
						const r = rangeOf(tg);
						const scale = (tg.flip ? -1 : 1) * (tg.unit === 'deg' ? DEG : tg.unit === 'mm' ? 1 / 1000 : 1);
						tg.data = new ChannelScan(scale, r ? r.lo : -Infinity, r ? r.hi : Infinity);
					}
				}
				continue;
			}
			const cells = row.cells;
			if (cells.length === 1 && cells[0] === '') continue; // blank line (usually the end of the file)
			const pl = plan!;
			if (cells.length !== header.length) {
				if (row.last && cells.length < header.length) {
					problems.add({ row: row.line, code: 'truncated-last-line', message: `The last line has ${cells.length} of ${header.length} cells; the file seems cut short. Upload the complete file, or delete the last line.` });
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
				problems.add({ row: row.line, column: header[pl.timeIndex].text, code: 'impossible-value', message: impossibleMessage(tText, row.line, pl.timeIndex, header[pl.timeIndex].text, tFault) });
			} else if (t !== null && !Number.isNaN(t)) {
				tv = pl.timeUnit === 'ms' ? t / 1000 : t;
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
				problems.add({ row: row.line, column: header[pl.timeIndex].text, code: 'time-blank', message: `The time cell on line ${row.line} is empty; every line needs its time.` });
			} else {
				problems.add({ row: row.line, column: header[pl.timeIndex].text, code: 'non-numeric', message: nonNumeric(tText, row.line, delimiter) });
			}
			time.push(tv);
			lines.push(row.line);
			for (const target of pl.targets) {
				const text = cells[target.index];
				if (text === undefined) {
					target.data.push(REPORTED);
					continue;
				}
				const v = parseNumber(text, decimalComma);
				if (v !== null) {
					// a gap (NaN) passes; anything else must be a normal double within the column's hard limit
					const fault = v !== v ? null : numberFault(text, v) ?? (Math.abs(v) > target.limit! ? 'limit' : null);
					if (fault) {
						target.data.push(REPORTED);
						problems.add({ row: row.line, column: target.header, code: 'impossible-value', message: impossibleMessage(text, row.line, target.index, target.header, fault, target, v) });
					} else target.data.push(v);
				} else {
					target.data.push(REPORTED);
					problems.add({ row: row.line, column: target.header, code: 'non-numeric', message: nonNumeric(text, row.line, delimiter) });
				}
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
		problems.add({ ...(blankLead ? { row: 1 } : {}), code: 'empty-file', message: 'The file is empty. Upload the exported recording: a header line (e.g. "time,right.knee.flexion (deg)") and one line per sample.' });
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
		problems.add({ row: lastLine, code: 'too-few-samples', message: `The file has ${n} sample${n === 1 ? '' : 's'}; filtering and derivatives need at least ${minSamples}. Upload a longer recording.` });
	}
	const t = time.take();
	let sampleHz = NaN;
	if (n >= 2 && !timeImpossible && !problems.has('time-not-increasing') && !problems.has('time-blank') && !problems.has('non-numeric')) {
		sampleHz = checkSampling(t, lines, opts.samplingTolerance ?? DEFAULT_SAMPLING_TOLERANCE, 10 ** -timeDecimals * (pl.timeUnit === 'ms' ? 1e-3 : 1), header[pl.timeIndex].text, problems);
	}
	const maxGap = opts.maxGapSamples ?? DEFAULT_MAX_GAP_SAMPLES;
	const channels: Recording['channels'] = [];
	const byName = new Map(pl.targets.map((tg) => [tg.channel.name, tg]));
	for (const e of opts.expected) {
		const tg = byName.get(e.name)!;
		if (tg.data instanceof ChannelScan) {
			tg.data.gaps.end(n);
			reportGaps(tg.data.gaps, n, tg, lines, opts.fillGaps ?? false, maxGap, problems);
			reportRange(tg, tg.data.worst, tg.data.worstValue, t, lines, problems);
			channels.push({ name: e.name, values: new Float64Array(0) });
			continue;
		}
		let values = tg.data.take();
		values = handleGaps(values, tg, lines, opts.fillGaps ?? false, maxGap, problems);
		const conv = toSI(tg.unit);
		const sign = tg.flip ? -1 : 1;
		for (let i = 0; i < values.length; i++) values[i] = sign * conv(values[i]);
		rangeCheck(values, tg, t, lines, problems);
		channels.push({ name: e.name, values });
	}
	if (problems.hasErrors) return fail();
	return {
		ok: true,
		recording: { time: t, sampleHz, channels, warnings: problems.done(), header: header.map((h) => h.text), delimiter }
	};
}

/** A target's hard limit in its column's own unit (HARD_LIMITS converted: 720° = 4π rad, 100 m = 100 000 mm). */
function hardLimitOf(tg: Target): number {
	switch (tg.unit) {
		case 'deg':
			return HARD_LIMITS.angleDeg;
		case 'rad':
			return HARD_LIMITS.angleDeg * DEG;
		case 'm':
			return HARD_LIMITS.positionM;
		case 'mm':
			return HARD_LIMITS.positionM * 1000;
	}
}

function impossibleMessage(text: string, line: number, index: number, header: string, fault: 'overflow' | 'underflow' | 'limit', tg?: Target, v = NaN): string {
	const where = `Line ${line}, column ${index + 1} ("${header}")`;
	const cell = `"${preview(text)}"`;
	const fix = 'Correct the cell in the exported file (or leave it empty to mark a gap), or re-export the recording.';
	if (fault === 'overflow') return `${where}: ${cell} is too large to be held as a number at all (it overflows to infinity); no recording of a person contains it. ${fix}`;
	if (fault === 'underflow')
		return `${where}: ${cell} is not zero but is smaller than the smallest number held at full precision (about 2.2e-308), so it would be read as 0 or lose its digits (an underflow); no recording of a person contains it. ${fix}`;
	const angle = tg!.channel.kind === 'angle';
	const shown = angle ? `${fmt(tg!.unit === 'rad' ? v / DEG : v)}°` : `${fmt(tg!.unit === 'mm' ? v / 1000 : v)} m`;
	const limit = angle ? `±${HARD_LIMITS.angleDeg}° (two full turns)` : `±${HARD_LIMITS.positionM} m from the lab origin`;
	return `${where}: ${cell} (${tg!.unit}) is ${shown}, beyond the hard limit of ${limit} that no recording of a person can exceed: the cell is corrupt, or the column or its unit is wrong. ${fix}`;
}

function nonNumeric(text: string, line: number, delimiter: string): string {
	const commaHint = delimiter === ',' ? '' : ' (a decimal comma is fine in this file, but only one per number and no thousands separators)';
	return `Line ${line} has "${preview(text)}" where a number is expected${commaHint}. Correct the cell, or leave it empty to mark a gap.`;
}

/** Checks every interval against the median interval; returns the mean sampling rate. */
function checkSampling(t: Float64Array, lines: LineNumbers, tolerance: number, printQuantum: number, column: string, problems: ProblemList): number {
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

/** Reports a channel's gaps: each one refused, or (gap filling on) the bridgeable ones as warnings and the rest refused. */
function reportGaps(gaps: GapRuns, n: number, tg: Target, lines: LineNumbers, fill: boolean, maxGap: number, problems: ProblemList): void {
	if (gaps.count === 0) return;
	if (!fill) {
		for (let k = 0; k < gaps.count; k++) {
			const i = gaps.starts[k];
			const len = gaps.lengths[k];
			const j = i + len - 1;
			problems.add({
				row: lines.at(i),
				column: tg.header,
				code: 'blank-cell',
				message: `${len === 1 ? `The cell on line ${lines.at(i)} is` : `Lines ${lines.at(i)}–${lines.at(j)} (${len} samples) are`} empty or NaN. Fill ${len === 1 ? 'it' : 'them'}, or turn on gap filling (bridges gaps of up to ${maxGap} samples by cubic interpolation).`
			});
		}
		return;
	}
	// the same rule as fillGaps (signal.ts): a gap touching either end, or longer than maxGap, cannot be bridged
	const tooLong = (k: number) => gaps.starts[k] === 0 || gaps.starts[k] + gaps.lengths[k] === n || gaps.lengths[k] > maxGap;
	for (let k = 0; k < gaps.count; k++) {
		if (!tooLong(k)) continue;
		const start = gaps.starts[k];
		const length = gaps.lengths[k];
		const span = `Lines ${lines.at(start)}–${lines.at(start + length - 1)} (${length} sample${length === 1 ? '' : 's'})`;
		const edge = start === 0 ? 'start' : start + length === n ? 'end' : null;
		problems.add({
			row: lines.at(start),
			column: tg.header,
			code: 'gap-too-long',
			message: edge
				? `${span} are empty at the ${edge} of the recording, where there is nothing to interpolate from. Cut the trial to where ${tg.header} has values.`
				: `${span} are a gap longer than gap filling bridges (at most ${maxGap} samples). Re-export this stretch, or cut the trial around it.`
		});
	}
	for (let k = 0; k < gaps.count; k++) {
		if (tooLong(k)) continue;
		const start = gaps.starts[k];
		const length = gaps.lengths[k];
		problems.add({
			row: lines.at(start),
			column: tg.header,
			code: 'gap-filled',
			severity: 'warning',
			message: `Lines ${lines.at(start)}–${lines.at(start + length - 1)} (${length} sample${length === 1 ? '' : 's'}) were empty and are filled by cubic interpolation.`
		});
	}
}

function handleGaps(values: Float64Array, tg: Target, lines: LineNumbers, fill: boolean, maxGap: number, problems: ProblemList): Float64Array {
	const gaps = new GapRuns();
	for (let i = 0; i < values.length; i++) gaps.step(i, Number.isNaN(values[i]));
	gaps.end(values.length);
	reportGaps(gaps, values.length, tg, lines, fill, maxGap, problems);
	return fill && gaps.count > 0 ? fillGaps(values, maxGap).filled : values;
}

/** The accepted band of an angle channel in rad (the usual range widened by RANGE_MARGIN_DEG), or null if none applies. */
function rangeOf(tg: Target): { min: number; max: number; lo: number; hi: number } | null {
	const m = DOF_RE.exec(tg.channel.name);
	const range = m ? PHYSIOLOGICAL_RANGES[`${m[2]}.${m[3]}`] : undefined;
	if (!range || tg.channel.kind !== 'angle') return null;
	return { ...range, lo: (range.min - RANGE_MARGIN_DEG) * DEG, hi: (range.max + RANGE_MARGIN_DEG) * DEG };
}

/** A warning for the sample furthest outside the band, if any. */
function reportRange(tg: Target, worst: number, value: number, t: Float64Array, lines: LineNumbers, problems: ProblemList): void {
	const range = rangeOf(tg);
	if (!range || worst < 0) return;
	problems.add({
		row: lines.at(worst),
		column: tg.header,
		code: 'out-of-range',
		severity: 'warning',
		message: `${tg.channel.name} reaches ${fmt(value / DEG)}° at line ${lines.at(worst)} (time ${fmt(t[worst])} s), outside the usual ${range.min}° to ${range.max}° by more than ${RANGE_MARGIN_DEG}°. Check the unit (deg or rad), the sign and the column; the file is accepted.`
	});
}

function rangeCheck(values: Float64Array, tg: Target, t: Float64Array, lines: LineNumbers, problems: ProblemList): void {
	const range = rangeOf(tg);
	if (!range) return;
	let worst = -1;
	let excess = 0;
	for (let i = 0; i < values.length; i++) {
		const v = values[i];
		if (!Number.isFinite(v)) continue;
		const e = v < range.lo ? range.lo - v : v > range.hi ? v - range.hi : 0;
		if (e > excess) {
			excess = e;
			worst = i;
		}
	}
	reportRange(tg, worst, worst < 0 ? NaN : values[worst], t, lines, problems);
}
