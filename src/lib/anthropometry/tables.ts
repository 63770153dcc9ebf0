// Loads the published anthropometric tables in /anthropometry and validates each with zod (every number with its source).
import { z } from 'zod';
import dempster from '../../../anthropometry/dempster-winter-2009.json';
import deLeva from '../../../anthropometry/de-leva-1996.json';
import zatsiorsky from '../../../anthropometry/zatsiorsky-regression-2002.json';
import drillis from '../../../anthropometry/drillis-contini-winter-2009.json';
import { LANDMARK_NAMES, LENGTH_END, MODEL_ENDPOINTS, type Landmark } from './endpoints';

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
/** The fields every table file opens with; `kind` tells the three layouts apart. */
const tableHeader = <K extends string>(kind: K) => ({ id: z.string().min(1), kind: z.literal(kind), title: z.string().min(1), citation });

const landmark = z.enum(LANDMARK_NAMES, {
	error: (i) => `unknown landmark ${JSON.stringify(i.input)}: name one of those listed in src/lib/anthropometry/endpoints.ts`
});
/** A row applied between other endpoints than its own: which model endpoints it stands for, and why. */
const takenAs = z
	.object({
		proximal: landmark.optional(),
		distal: landmark.optional(),
		note: z.string().min(40, 'say why the row may stand for these endpoints and what that changes')
	})
	.refine((t) => t.proximal || t.distal, 'name the proximal or distal endpoint the row is taken as');
const endpoints = {
	proximal: landmark,
	distal: landmark,
	/** The source's own wording or abbreviation of the endpoints. */
	printedAs: z.string().min(3).optional(),
	takenAs: takenAs.optional()
};
const fractionsRow = z.object({ ...endpoints, any: sexParams.optional(), female: sexParams.optional(), male: sexParams.optional() });
const fractionsSegment = fractionsRow.extend({
	/** Further rows of the source for this segment, with other endpoints: kept for reference, not used. */
	otherRows: z.array(fractionsRow.extend({ unused: z.string().min(10, 'say why the model does not use this row') })).optional()
});

export const fractionsTableSchema = z.object({
	...tableHeader('segment-fractions'),
	population: z.string().min(1),
	/** How the recalled values were checked. */
	verification: z.string().min(20).optional(),
	sexes: z.array(z.enum(['any', 'female', 'male'])).min(1),
	lengths: z.object({
		from: z.string().min(1),
		note: z.string().min(1),
		referenceStature: z.record(z.string(), sourced(positive)).optional()
	}),
	columns: z.record(z.string(), z.string().min(1)),
	segments: z.record(z.enum(SEGMENTS), fractionsSegment)
});

export const statureTableSchema = z.object({
	...tableHeader('stature-fractions'),
	columns: z.record(z.string(), z.string().min(1)),
	/** Segment lengths (keyed by segment, with endpoints) and other body dimensions (keyed by name). */
	lengths: z.record(
		z.string(),
		z.object({
			fraction: sourced(fraction),
			between: z.string().min(1),
			proximal: landmark.optional(),
			distal: landmark.optional(),
			takenAs: takenAs.optional(),
			note: z.string().min(20).optional()
		})
	)
});

export const regressionTableSchema = z.object({
	...tableHeader('mass-regression'),
	population: z.string().min(1),
	referenceSubject: z.object({ bodyMass: sourced(positive), stature: sourced(positive) }),
	sexes: z.array(z.enum(['female', 'male'])).min(1),
	equation: z.string().min(1),
	columns: z.record(z.string(), z.string().min(1)),
	geometry: z.object({ from: z.string().min(1), sex: z.enum(['female', 'male']), note: z.string().min(1) }),
	segments: z.record(
		z.enum(SEGMENTS),
		z.object({
			proximal: landmark,
			distal: landmark,
			b0: sourced(z.number()),
			b1: sourced(z.number()),
			b2: sourced(z.number()),
			standardError: z.object({ value: positive.nullable(), source })
		})
	)
});

export type FractionsTable = z.infer<typeof fractionsTableSchema>;
export type StatureTable = z.infer<typeof statureTableSchema>;
export type RegressionTable = z.infer<typeof regressionTableSchema>;
export type SexParams = z.infer<typeof sexParams>;
export type FractionsRow = z.infer<typeof fractionsRow>;
export type TakenAs = z.infer<typeof takenAs>;

/** Validates one table file; throws a message naming the file and every bad field. */
export function parseTable<T>(file: string, schema: z.ZodType<T>, data: unknown): T {
	const r = schema.safeParse(data);
	if (!r.success) {
		throw new Error(`anthropometry/${file}: ${r.error.issues.map((i) => `${i.path.join('.')}: ${i.message}`).join('; ')}`);
	}
	return r.data;
}

/** Checks beyond the schema: every listed sex has parameters for every segment, in every row. */
export function checkComplete(file: string, t: FractionsTable): FractionsTable {
	for (const seg of SEGMENTS) {
		const s = t.segments[seg];
		if (!s) throw new Error(`anthropometry/${file}: segments.${seg}: missing`);
		const rows: [string, FractionsRow][] = [
			[`segments.${seg}`, s],
			...(s.otherRows ?? []).map((r, i): [string, FractionsRow] => [`segments.${seg}.otherRows.${i}`, r])
		];
		for (const [path, row] of rows) {
			for (const sex of t.sexes) if (!row[sex]) throw new Error(`anthropometry/${file}: ${path}.${sex}: missing`);
			if (t.lengths.from === 'own') {
				for (const sex of t.sexes) {
					if (!row[sex]?.meanLength)
						throw new Error(`anthropometry/${file}: ${path}.${sex}.meanLength: needed when lengths come from the table itself`);
					if (!t.lengths.referenceStature?.[sex]) throw new Error(`anthropometry/${file}: lengths.referenceStature.${sex}: missing`);
				}
			}
		}
	}
	return t;
}

// ---------------------------------------------------------------------------------------------------------------
// Endpoints: a row is used only between the endpoints the model needs (MODEL_ENDPOINTS in endpoints.ts).
// ---------------------------------------------------------------------------------------------------------------

type Endpoints = { proximal: Landmark; distal: Landmark };
type EndpointRow = Endpoints & { takenAs?: TakenAs };

/** The endpoints the model applies a row between: its own, or those it is explicitly taken as. */
export function modelEndpointsOf(row: EndpointRow): Endpoints {
	return { proximal: row.takenAs?.proximal ?? row.proximal, distal: row.takenAs?.distal ?? row.distal };
}
const arrow = (e: { proximal: string; distal: string }) => `${e.proximal} → ${e.distal}`;
function describe(row: EndpointRow): string {
	return row.takenAs ? `${arrow(row)} (taken as ${arrow(modelEndpointsOf(row))})` : arrow(row);
}

/**
 * The endpoints the model needs for one segment of a table. Hand and foot end where their length ends: for a
 * table with its own mean lengths that is the row's own distal endpoint; otherwise the stature-proportion row's.
 */
function needed(
	seg: SegmentName,
	lengthRow: EndpointRow | null,
	lengthPath: string
): { proximal: Landmark; distal: Landmark | null; why: string } {
	const m = MODEL_ENDPOINTS[seg];
	if (m.distal !== LENGTH_END) return { proximal: m.proximal, distal: m.distal, why: '' };
	if (!lengthRow) return { proximal: m.proximal, distal: null, why: '' };
	return {
		proximal: m.proximal,
		distal: modelEndpointsOf(lengthRow).distal,
		why: ` (its ${seg} ends where the length it is scaled by ends, ${lengthPath})`
	};
}
function mismatch(row: EndpointRow, need: { proximal: Landmark; distal: Landmark | null }): boolean {
	const got = modelEndpointsOf(row);
	return got.proximal !== need.proximal || (need.distal !== null && got.distal !== need.distal);
}

/**
 * Refuses a segment-fractions table any of whose used rows does not run between the model's endpoints (after the
 * substitutions the file states in `takenAs`), and a substitution where the table has a row with the model's own
 * endpoints. `stature` is the table unmeasured lengths come from when the table has none of its own.
 */
export function checkFractionsEndpoints(file: string, t: FractionsTable, stature: { file: string; table: StatureTable }): FractionsTable {
	const where = `anthropometry/${file} (table ${t.id})`;
	if (t.lengths.from !== 'own' && t.lengths.from !== stature.table.id) {
		throw new Error(`${where}: lengths.from: "${t.lengths.from}" is not a stature-proportion table Momentry has (${stature.table.id})`);
	}
	for (const seg of SEGMENTS) {
		const row = t.segments[seg];
		const lengthRow = t.lengths.from === 'own' ? null : (stature.table.lengths[seg] as EndpointRow);
		const need = needed(seg, lengthRow, `anthropometry/${stature.file} lengths.${seg}`);
		if (mismatch(row, need)) {
			throw new Error(
				`${where}: segments.${seg}: endpoints ${describe(row)} do not match the model, whose ${seg} runs ${need.proximal} → ${need.distal ?? 'the end of its length'}${need.why}; use a row with these endpoints, or state in takenAs why this row may stand for them`
			);
		}
		if (row.takenAs) {
			const i = (row.otherRows ?? []).findIndex((r) => !r.takenAs && !mismatch(r, need));
			if (i >= 0) {
				throw new Error(
					`${where}: segments.${seg}: the row ${describe(row)} stands in for the model’s endpoints, but otherRows.${i} (${arrow(row.otherRows![i])}) has them: use that row`
				);
			}
		}
	}
	return t;
}

/** Refuses a stature-proportion table whose segment lengths do not run between the model's endpoints. */
export function checkStatureEndpoints(file: string, t: StatureTable): StatureTable {
	for (const seg of SEGMENTS) {
		const row = t.lengths[seg];
		const path = `anthropometry/${file} (table ${t.id}): lengths.${seg}`;
		if (!row) throw new Error(`${path}: missing`);
		if (!row.proximal || !row.distal) throw new Error(`${path}: name the proximal and distal endpoints of the length`);
		const need = needed(seg, null, '');
		if (mismatch(row as EndpointRow, need)) {
			throw new Error(
				`${path}: endpoints ${describe(row as EndpointRow)} do not match the model, whose ${seg} runs ${need.proximal} → ${need.distal ?? 'the end of its length'}; use a length with these endpoints, or state in takenAs why this one may stand for them`
			);
		}
	}
	return t;
}

/** Refuses a mass regression whose rows are not for the same segments (endpoints) as the geometry rows they are combined with. */
export function checkRegressionEndpoints(
	file: string,
	r: RegressionTable,
	geometry: { file: string; table: FractionsTable }
): RegressionTable {
	const where = `anthropometry/${file} (table ${r.id})`;
	if (r.geometry.from !== geometry.table.id) throw new Error(`${where}: geometry.from: "${r.geometry.from}" is not ${geometry.table.id}`);
	for (const seg of SEGMENTS) {
		const a = r.segments[seg],
			b = geometry.table.segments[seg];
		if (a.proximal !== b.proximal || a.distal !== b.distal) {
			throw new Error(
				`${where}: segments.${seg}: endpoints ${arrow(a)} do not match those of the geometry row it is combined with, anthropometry/${geometry.file} segments.${seg} (${arrow(b)})`
			);
		}
	}
	return r;
}

const drillisTable = checkStatureEndpoints(
	'drillis-contini-winter-2009.json',
	parseTable('drillis-contini-winter-2009.json', statureTableSchema, drillis)
);
const stature = { file: 'drillis-contini-winter-2009.json', table: drillisTable };
const fractions = (file: string, data: unknown) =>
	checkFractionsEndpoints(file, checkComplete(file, parseTable(file, fractionsTableSchema, data)), stature);
const deLevaTable = fractions('de-leva-1996.json', deLeva);

/** The validated tables; loading this module refuses any table whose endpoints do not match the model's. */
export const tables = {
	dempster: fractions('dempster-winter-2009.json', dempster),
	deLeva: deLevaTable,
	zatsiorsky: checkRegressionEndpoints(
		'zatsiorsky-regression-2002.json',
		parseTable('zatsiorsky-regression-2002.json', regressionTableSchema, zatsiorsky),
		{ file: 'de-leva-1996.json', table: deLevaTable }
	),
	drillis: drillisTable
};

/** The tables a study can choose for segment parameters, by id. */
export const SEGMENT_TABLES = {
	'dempster-winter-2009': { title: tables.dempster.title, citation: tables.dempster.citation },
	'de-leva-1996': { title: tables.deLeva.title, citation: tables.deLeva.citation },
	'zatsiorsky-regression-2002': { title: tables.zatsiorsky.title, citation: tables.zatsiorsky.citation }
} as const;
export type SegmentTableId = keyof typeof SEGMENT_TABLES;
export const SEGMENT_TABLE_IDS = Object.keys(SEGMENT_TABLES) as SegmentTableId[];
