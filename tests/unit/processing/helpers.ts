// Test helpers for the processing pipeline: recordings built directly from functions of time.
import type { Recording } from '../../../src/lib/processing/recording';
import type { SessionModel } from '../../../src/lib/processing/session-model';

/** A recording of `frames` samples at `sampleHz` whose channel j (in built.expected order) is value(name, t). */
export function makeRecording(
	built: SessionModel,
	frames: number,
	sampleHz: number,
	value: (name: string, t: number) => number
): Recording {
	const time = Float64Array.from({ length: frames }, (_, k) => k / sampleHz);
	return {
		time,
		sampleHz,
		channels: built.expected.map((e) => ({ name: e.name, values: Float64Array.from(time, (t) => value(e.name, t)) })),
		warnings: [],
		header: ['time (s)', ...built.expected.map((e) => e.name)],
		delimiter: ','
	};
}

export const deg = Math.PI / 180;
