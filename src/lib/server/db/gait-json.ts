// What the JSON columns of run_gait hold, read back: each parsed here, once, with its schema, so that the RunGait
// model hands services typed values (the shapes of src/lib/types/gait.ts, written by runs/gait-record.ts).
import { z } from 'zod';
import type { ContactView, FootSpatiotemporalView, GaitCycleView, GaitEventView, StatView } from '../../types/gait';

const foot = z.enum(['left', 'right']);
const source = z.enum(['plate', 'kinematic']);
const num = z.number();
const maybe = z.number().nullable();

/** run_gait.forces: how the run brought the forces to the angle rate. */
export const storedForcesSchema = z.object({
	fileName: z.string(),
	sampleHz: num,
	angleHz: num,
	ratio: num,
	cutoffHz: maybe,
	thresholdN: num,
	bodyWeightN: maybe
});
export type StoredForces = z.output<typeof storedForcesSchema>;

export const contactViewSchema = z.object({
	id: z.string(),
	plate: z.string(),
	start: num,
	end: num,
	startTime: num,
	endTime: num,
	foot: foot.nullable(),
	assignedBy: z.enum(['model', 'user']).nullable(),
	shared: z.boolean(),
	offPlate: z.boolean(),
	clipped: z.boolean(),
	used: z.boolean(),
	reason: z.string().nullable()
}) satisfies z.ZodType<ContactView>;

export const eventViewSchema = z.object({
	foot,
	kind: z.enum(['strike', 'off']),
	time: num,
	sample: num,
	source
}) satisfies z.ZodType<GaitEventView>;

export const cycleViewSchema = z.object({
	foot,
	start: num,
	end: num,
	startSample: num,
	endSample: num,
	off: maybe,
	offSample: maybe,
	cycleTimeS: num,
	stanceTimeS: maybe,
	swingTimeS: maybe,
	stancePercent: maybe,
	swingPercent: maybe,
	sources: z.object({ start: source, off: source.nullable(), end: source }),
	excluded: z.enum(['no-foot-off', 'several-foot-offs', 'edge-zone', 'excluded']).nullable(),
	excludedText: z.string().nullable()
}) satisfies z.ZodType<GaitCycleView>;

const stat = z.object({ mean: maybe, sd: maybe, n: num }) satisfies z.ZodType<StatView>;
const footTable = z.object({
	foot,
	cycles: num,
	cadence: stat,
	cycleTimeS: stat,
	stanceTimeS: stat,
	swingTimeS: stat,
	stancePercent: stat,
	swingPercent: stat,
	doubleSupportS: stat,
	doubleSupportPercent: stat,
	stepLengthM: stat,
	strideLengthM: stat,
	speedMS: stat
}) satisfies z.ZodType<FootSpatiotemporalView>;

/** run_gait.spatiotemporal: one row per foot and how lengths were measured. */
export const storedSpatiotemporalSchema = z.object({
	left: footTable,
	right: footTable,
	lengthBasis: z.enum(['heel', 'pelvis']).nullable()
});
