// Joint moments compared with the known torques of a forward simulation (src/lib/processing/simulate-walking.ts): the
// round trips with ground contact, at the pure level and through the HTTP API, measure them the same way.

/**
 * The worst |moment − known| over samples [from, to) (outside the edge zone), kept apart within `margin` samples of a
 * contact's start or end (a plate's threshold crossing) and away from them, with the peak |known| over the same span.
 */
export function momentErrors(
	moment: ArrayLike<number>,
	known: (k: number) => number,
	span: { from: number; to: number },
	contacts: readonly { start: number; end: number }[],
	margin = 8
): { peak: number; worst: number; worstNear: number } {
	const nearEdge = (k: number) => contacts.some((c) => Math.abs(k - c.start) <= margin || Math.abs(k - c.end) <= margin);
	let peak = 0,
		worst = 0,
		worstNear = 0;
	for (let k = span.from; k < span.to; k++) {
		const want = known(k);
		peak = Math.max(peak, Math.abs(want));
		const e = Math.abs(moment[k] - want);
		if (nearEdge(k)) worstNear = Math.max(worstNear, e);
		else worst = Math.max(worst, e);
	}
	return { peak, worst, worstNear };
}
