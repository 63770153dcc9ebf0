// What the JSON columns of runs hold, read back: each is parsed here, once, with its schema, so that the Run model
// hands services typed values. Runs stored by earlier versions read as they were made (no end treatment, no edge
// zone); a malformed stored value reads as absent rather than failing a page.
import { z } from 'zod';
import { runOptionsSchema } from '../../processing/pipeline';
import type { StoredRunOptions } from '../../types/runs';

/** runs.options: the options as validated when the run was started; runs made before end treatments existed name none. */
export const storedOptionsSchema = runOptionsSchema.extend({
	endTreatment: runOptionsSchema.shape.endTreatment.removeDefault().optional()
}) satisfies z.ZodType<StoredRunOptions>;

const figure = z.number().nullish().catch(null);
const figures = {
	peakPositive: figure,
	peakPositiveTime: figure,
	peakNegative: figure,
	peakNegativeTime: figure,
	range: figure,
	mean: figure,
	samples: figure
};
const summaryRowSchema = z.object({
	dof: z.string(),
	quantity: z.string(),
	unit: z.string(),
	...figures,
	/** The same figures over every sample (absent for runs stored before edge zones). */
	wholeTrial: z.object(figures).optional().catch(undefined)
});
/** One row of runs.summary: SummaryRow of the pipeline, read leniently (older runs lack some figures). */
export type StoredSummaryRow = z.output<typeof summaryRowSchema>;
/** runs.summary: peaks, range and mean per DOF; none for a run without results. */
export const storedSummarySchema = z.array(summaryRowSchema).nullable().catch(null);

const seconds = z.number().nonnegative().catch(0);
const samples = z.number().int().nonnegative().catch(0);
/** runs.edge_zone: the EdgeZone of the pipeline; null for runs made before edge zones (or a malformed value). */
export const storedEdgeZoneSchema = z
	.object({ startSeconds: seconds, endSeconds: seconds, startSamples: samples, endSamples: samples, basis: z.string().catch('') })
	.nullable()
	.catch(null);

const lenient = <T extends z.ZodType>(schema: T) => schema.optional().catch(undefined);
const valueOf = z.looseObject({ value: z.number() });
/** A scaled segment as the model record stores it (ScaledSegment of the scaling), with the figures the report shows. */
const segmentSchema = z.looseObject({
	key: z.string(),
	length: valueOf,
	mass: valueOf,
	comDistance: valueOf,
	inertia: z.looseObject({ flexion: valueOf, abduction: valueOf, longitudinal: valueOf })
});

/**
 * The fields of runs.model that results read: the DOFs in the model's order with their sign rules, body mass, segment
 * table, gravity and scaled segments. The record itself is kept and shown as stored (it says what the run used).
 */
export const modelFieldsSchema = z
	.object({
		dofs: lenient(z.array(z.object({ name: z.string(), positive: z.string().nullish() }))),
		bodyMassKg: lenient(z.number()),
		table: lenient(z.string()),
		gravity: lenient(z.array(z.number())),
		parameters: lenient(
			z.object({
				segments: lenient(z.array(segmentSchema)),
				table: lenient(z.object({ id: z.string(), title: z.string(), citation: z.string() }))
			})
		)
	})
	.catch({});
export type RunModelFields = z.output<typeof modelFieldsSchema>;
