// Loads the published anthropometric tables in /anthropometry and validates each with zod (every number with its source).
import { z } from 'zod';
import dempster from '../../../anthropometry/dempster-winter-2009.json';
import deLeva from '../../../anthropometry/de-leva-1996.json';
import zatsiorsky from '../../../anthropometry/zatsiorsky-regression-2002.json';
import drillis from '../../../anthropometry/drillis-contini-winter-2009.json';

export const SEGMENTS = ['upperarm', 'forearm', 'hand', 'thigh', 'shank', 'foot'] as const;
export type SegmentName = (typeof SEGMENTS)[number];
export type TableSex = 'female' | 'male';

const source = z.string().min(3, 'every number needs a source');
const sourced = (value: z.ZodType<number>) => z.object({ value, source });
const fraction = z.number().gt(0, 'must be above 0').lt(1, 'must be below 1');
const positive = z.number().gt(0, 'must be positive');

const sexParams = z.object({
	massFraction: sourced(fraction),
	comFraction: sourced(fraction),
	gyration: z.object({ flexion: sourced(fraction), abduction: sourced(fraction), longitudinal: sourced(fraction) }),
	meanLength: sourced(positive).optional()
});

const citation = z.string().min(20, 'needs the full citation');

export const fractionsTableSchema = z.object({
	id: z.string().min(1),
	kind: z.literal('segment-fractions'),
	title: z.string().min(1),
	citation,
	population: z.string().min(1),
	sexes: z.array(z.enum(['any', 'female', 'male'])).min(1),
	lengths: z.object({
		from: z.string().min(1),
		note: z.string().min(1),
		referenceStature: z.record(z.string(), sourced(positive)).optional()
	}),
	columns: z.record(z.string(), z.string().min(1)),
	segments: z.record(
		z.enum(SEGMENTS),
		z.object({ proximal: z.string().min(1), distal: z.string().min(1), any: sexParams.optional(), female: sexParams.optional(), male: sexParams.optional() })
	)
});

export const statureTableSchema = z.object({
	id: z.string().min(1),
	kind: z.literal('stature-fractions'),
	title: z.string().min(1),
	citation,
	columns: z.record(z.string(), z.string().min(1)),
	lengths: z.record(z.string(), z.object({ fraction: sourced(fraction), between: z.string().min(1) }))
});

export const regressionTableSchema = z.object({
	id: z.string().min(1),
	kind: z.literal('mass-regression'),
	title: z.string().min(1),
	citation,
	population: z.string().min(1),
	referenceSubject: z.object({ bodyMass: sourced(positive), stature: sourced(positive) }),
	sexes: z.array(z.enum(['female', 'male'])).min(1),
	equation: z.string().min(1),
	columns: z.record(z.string(), z.string().min(1)),
	geometry: z.object({ from: z.string().min(1), sex: z.enum(['female', 'male']), note: z.string().min(1) }),
	segments: z.record(
		z.enum(SEGMENTS),
		z.object({ b0: sourced(z.number()), b1: sourced(z.number()), b2: sourced(z.number()), standardError: z.object({ value: positive.nullable(), source }) })
	)
});

export type FractionsTable = z.infer<typeof fractionsTableSchema>;
export type StatureTable = z.infer<typeof statureTableSchema>;
export type RegressionTable = z.infer<typeof regressionTableSchema>;
export type SexParams = z.infer<typeof sexParams>;

/** Validates one table file; throws a message naming the file and every bad field. */
export function parseTable<T>(file: string, schema: z.ZodType<T>, data: unknown): T {
	const r = schema.safeParse(data);
	if (!r.success) {
		throw new Error(`anthropometry/${file}: ${r.error.issues.map((i) => `${i.path.join('.')}: ${i.message}`).join('; ')}`);
	}
	return r.data;
}

/** Checks beyond the schema: every listed sex has parameters for every segment. */
function checkComplete(file: string, t: FractionsTable): FractionsTable {
	for (const seg of SEGMENTS) {
		const s = t.segments[seg];
		if (!s) throw new Error(`anthropometry/${file}: segments.${seg}: missing`);
		for (const sex of t.sexes) if (!s[sex]) throw new Error(`anthropometry/${file}: segments.${seg}.${sex}: missing`);
		if (t.lengths.from === 'own') {
			for (const sex of t.sexes) {
				if (!s[sex]?.meanLength) throw new Error(`anthropometry/${file}: segments.${seg}.${sex}.meanLength: needed when lengths come from the table itself`);
				if (!t.lengths.referenceStature?.[sex]) throw new Error(`anthropometry/${file}: lengths.referenceStature.${sex}: missing`);
			}
		}
	}
	return t;
}

export const tables = {
	dempster: checkComplete('dempster-winter-2009.json', parseTable('dempster-winter-2009.json', fractionsTableSchema, dempster)),
	deLeva: checkComplete('de-leva-1996.json', parseTable('de-leva-1996.json', fractionsTableSchema, deLeva)),
	zatsiorsky: parseTable('zatsiorsky-regression-2002.json', regressionTableSchema, zatsiorsky),
	drillis: parseTable('drillis-contini-winter-2009.json', statureTableSchema, drillis)
};

/** The tables a study can choose for segment parameters, by id. */
export const SEGMENT_TABLES = {
	'dempster-winter-2009': { title: tables.dempster.title, citation: tables.dempster.citation },
	'de-leva-1996': { title: tables.deLeva.title, citation: tables.deLeva.citation },
	'zatsiorsky-regression-2002': { title: tables.zatsiorsky.title, citation: tables.zatsiorsky.citation }
} as const;
export type SegmentTableId = keyof typeof SEGMENT_TABLES;
export const SEGMENT_TABLE_IDS = Object.keys(SEGMENT_TABLES) as SegmentTableId[];
