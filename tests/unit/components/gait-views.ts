// Hand-built contact and cycle rows of a gait answer, as the gait component tests write them (sample numbers in,
// times at `hz` samples per second, 100 unless given).
import type { ContactView, GaitCycleView, GaitEventSource } from '../../../src/lib/types/gait';

/** A used plate contact `id` ("plate#k") from sample `start` to `end`, on the left foot by the model unless `more` says otherwise. */
export function contactView(id: string, start: number, end: number, more: Partial<ContactView> = {}, hz = 100): ContactView {
	return {
		id,
		plate: id.split('#')[0],
		start,
		end,
		startTime: start / hz,
		endTime: end / hz,
		foot: 'left',
		assignedBy: 'model',
		shared: false,
		offPlate: false,
		clipped: false,
		used: true,
		reason: null,
		...more
	};
}

/** A cycle of `foot` from sample `a` to `b` with foot off at `off` (null: none found), its figures worked out from those. */
export function cycleView(
	foot: 'left' | 'right',
	a: number,
	off: number | null,
	b: number,
	{
		endSource = 'plate',
		excluded = null,
		excludedText = null,
		hz = 100
	}: { endSource?: GaitEventSource; excluded?: GaitCycleView['excluded']; excludedText?: string | null; hz?: number } = {}
): GaitCycleView {
	return {
		foot,
		start: a / hz,
		end: b / hz,
		startSample: a,
		endSample: b,
		off: off === null ? null : off / hz,
		offSample: off,
		cycleTimeS: (b - a) / hz,
		stanceTimeS: off === null ? null : (off - a) / hz,
		swingTimeS: off === null ? null : (b - off) / hz,
		stancePercent: off === null ? null : (100 * (off - a)) / (b - a),
		swingPercent: off === null ? null : (100 * (b - off)) / (b - a),
		sources: { start: 'plate', off: off === null ? null : 'plate', end: endSource },
		excluded,
		excludedText
	};
}
