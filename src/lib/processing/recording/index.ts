// Recording files: a joint-angle (and force-plate) recording (delimited text, streamed) into SI channels, or every problem found.
// The public interface; the parts are stream.ts (bytes → rows), header.ts (header matching and the column
// mapping), layout.ts (our channel names), plan.ts (column → channel, unit, flip), parse.ts (cells → Float64Array
// blocks), checks.ts (sampling, gaps, ranges, hard limits), units.ts (the unit rule, from mathjs) and forces.ts (plate channels).
export { parseRecording } from './parse';
export { detectDelimiter } from './stream';
export { columnMappingSchema, suggestChannel, type ColumnMapping } from './header';
export { PHYSIOLOGICAL_RANGES, PLATE_CHANNEL_RE, plateChannelParts, schemeKind } from './layout';
export { MAX_PROBLEMS_PER_CODE } from './problems';
export type { ExpectedChannel, ParseOptions, ParseResult, Problem, Recording } from './types';
export { HARD_LIMITS } from './checks';
export type { ChannelKind } from './units';
export {
	forceChannels,
	forceChannelsOf,
	pairForceRecording,
	plateChannelNames,
	plateSignalsOf,
	splitAngleAndForce,
	type ForceChannelOptions,
	type ForcePairing
} from './forces';
