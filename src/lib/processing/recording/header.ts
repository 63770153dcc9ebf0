// Header matching and mapping: a header cell's name and unit suffix, the column mapping a person confirms for a
// file from another system (columnMappingSchema, stored by the server as a study's preset), and the suggested
// mapping guessed from the header words.
import { z } from 'zod';
import { BASE_RE, DOF_RE } from './layout';
import type { ExpectedChannel } from './types';
import { CHANNEL_UNITS, UNITS, type AngleUnit, type ChannelKind, type ChannelUnit } from './units';

const mappedColumnSchema = z.object({
	channel: z.string().min(1).nullable(),
	unit: z.enum(CHANNEL_UNITS, { error: `unit must be ${CHANNEL_UNITS.slice(0, -1).join(', ')} or ${CHANNEL_UNITS.at(-1)}` }),
	flip: z.boolean()
});
/** How the columns of a file from another system become our channels (stored by the server as presets, as this JSON). */
export const columnMappingSchema = z.object({
	timeColumn: z.string().min(1, 'choose the time column'),
	timeUnit: z.enum(UNITS.time, { error: `time unit must be ${UNITS.time.join(' or ')}` }),
	columns: z.record(z.string(), mappedColumnSchema)
});
export type ColumnMapping = z.infer<typeof columnMappingSchema>;

const SUFFIX_RE = /^(.*?)\s*\(\s*([^()]*?)\s*\)$/;

export interface HeaderColumn {
	text: string;
	name: string;
	unit?: string;
}

export function splitHeader(text: string): HeaderColumn {
	const m = SUFFIX_RE.exec(text);
	return m ? { text, name: m[1], unit: m[2] } : { text, name: text };
}

export const isTimeName = (name: string) => name.toLowerCase() === 'time';

// ---- suggestions for the mapping step -------------------------------------------------------------

const SIDE_WORDS: Record<string, string[]> = { right: ['right', 'r', 'rt', 'rgt'], left: ['left', 'l', 'lt', 'lft'] };
const JOINT_WORDS: Record<string, string[]> = {
	hip: ['hip'],
	knee: ['knee', 'kne'],
	ankle: ['ankle', 'ank'],
	shoulder: ['shoulder', 'shld', 'sho', 'shou'],
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

function guessUnit(header: string, kind: ChannelKind | undefined, fallback: AngleUnit): ChannelUnit {
	const t = tokens(header);
	if (kind === 'position') return t.includes('mm') ? 'mm' : 'm';
	if (kind === 'length') return t.includes('mm') ? 'mm' : t.includes('cm') ? 'cm' : 'm';
	if (kind === 'force') return t.includes('kn') ? 'kN' : 'N';
	if (kind === 'moment') return t.includes('nmm') || (t.includes('n') && t.includes('mm')) ? 'N·mm' : 'N·m';
	if (t.some((w) => w.startsWith('rad'))) return 'rad';
	if (t.some((w) => w.startsWith('deg'))) return 'deg';
	return fallback;
}

/** A starting mapping for the mapping step: best guesses only, every one confirmed by a person. */
export function suggestMapping(
	headers: readonly string[],
	expected: readonly ExpectedChannel[],
	defaultAngleUnit: AngleUnit = 'deg'
): ColumnMapping {
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
