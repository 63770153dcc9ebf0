// The gait review's pure helpers (src/lib/components/gait/gait-plot.ts). Sources of the expected values:
// - greyscale: relative luminance and contrast ratio as defined in WCAG 2.1 (W3C Recommendation, "relative luminance",
//   "contrast ratio"); 3:1 is WCAG's minimum for graphical objects (success criterion 1.4.11);
// - normalisation: a closed form — a sine with one period per cycle normalises to sin(2π p / 100) exactly at any cycle
//   length, so the mean is that sine and the SD zero; a linear ramp within each cycle to p / 100;
// - everything else is hand-worked from the small inputs written here.
import { describe, expect, it } from 'vitest';
import {
	contactFeetFromForm,
	copTrails,
	cycleBands,
	drawnIndices,
	FOOT_STYLE,
	footVerticalGrf,
	initialChoice,
	statText,
	type GaitData
} from '../../../src/lib/components/gait/gait-plot';
import { contactView as contact, cycleView as cycle } from './gait-views';

const toLinear = (c: number) => (c <= 0.04045 ? c / 12.92 : ((c + 0.055) / 1.055) ** 2.4);
function luminance(hex: string): number {
	const [r, g, b] = [1, 3, 5].map((i) => toLinear(parseInt(hex.slice(i, i + 2), 16) / 255));
	return 0.2126 * r + 0.7152 * g + 0.0722 * b;
}

describe('FOOT_STYLE', () => {
	it('keeps left and right apart in greyscale (WCAG 2.1 contrast ratio ≥ 3) and by dash pattern', () => {
		const [a, b] = [luminance(FOOT_STYLE.left.colour), luminance(FOOT_STYLE.right.colour)].sort((x, y) => y - x);
		expect((a + 0.05) / (b + 0.05)).toBeGreaterThanOrEqual(3);
		expect(FOOT_STYLE.left.dash).not.toBe(FOOT_STYLE.right.dash);
	});
	it('WCAG luminance check itself: black on white is 21:1 (the W3C definition)', () => {
		expect((luminance('#ffffff') + 0.05) / (luminance('#000000') + 0.05)).toBeCloseTo(21, 10);
	});
});

describe('statText', () => {
	it('writes mean ± SD, the mean alone without an SD, and a dash with no value', () => {
		expect(statText({ mean: 1.2345, sd: 0.0321, n: 4 }, 2)).toBe('1.23 ± 0.03');
		expect(statText({ mean: 1.2346, sd: null, n: 1 }, 3)).toBe('1.235');
		expect(statText({ mean: null, sd: null, n: 0 })).toBe('—');
	});
});

describe('cycleBands', () => {
	const hz = 100;
	const t = Array.from({ length: 400 }, (_, k) => k / hz);
	// left cycles of 1.00 s and 1.20 s, right one of 1.10 s; the series is a sine with one period per left cycle
	const cycles = [cycle('left', 20, 80, 120), cycle('left', 120, 190, 240), cycle('right', 70, 140, 180)];
	it('normalises a sine with one period per cycle to sin(2πp/100), SD 0 (closed form), n per foot and mean foot off', () => {
		const v = t.map((s, k) =>
			k >= 20 && k < 120 ? Math.sin((2 * Math.PI * (k - 20)) / 100) : k >= 120 && k <= 240 ? Math.sin((2 * Math.PI * (k - 120)) / 120) : 0
		);
		const b = cycleBands(t, v, cycles);
		expect(b.left.n).toBe(2);
		expect(b.right.n).toBe(1);
		expect(b.left.percent).toHaveLength(101);
		for (let j = 0; j <= 100; j += 5) {
			expect(b.left.mean[j]).toBeCloseTo(Math.sin((2 * Math.PI * j) / 100), 9);
			expect(b.left.sd[j]).toBeCloseTo(0, 9);
		}
		// foot off at 60 % and (190 − 120) / 120 = 58.33 %: mean 59.17 %
		expect(b.left.offPercent).toBeCloseTo((60 + 700 / 12) / 2, 9);
		expect(Number.isNaN(b.right.sd[50])).toBe(true); // one cycle: no SD
	});
	it('leaves out excluded cycles and treats null as a gap', () => {
		const v = t.map((_, k) => (k === 300 ? null : k));
		const b = cycleBands(t, v, [...cycles, cycle('right', 180, 250, 290, { excluded: 'edge-zone', excludedText: 'x' })]);
		expect(b.right.n).toBe(1);
		// a ramp k over 70…180: at 50 % it is 125
		expect(b.right.mean[50]).toBeCloseTo(125, 9);
	});
});

describe('footVerticalGrf', () => {
	const n = 10;
	const base = {
		t: Array.from({ length: n }, (_, k) => k / 100),
		grf: [
			{
				plate: 'p1',
				x: new Array(n).fill(0),
				y: Array.from({ length: n }, (_, k) => 100 * k),
				z: new Array(n).fill(0),
				percentBodyWeight: null,
				freeMoment: { x: [], y: [], z: [] }
			}
		]
	} as unknown as Pick<GaitData, 't' | 'grf'>;
	it('puts each plate vertical force on the foot of its contact and keeps only cycles whose stance is on a plate', () => {
		const contacts = [contact('p1#0', 2, 4, { foot: 'left' }), contact('p1#1', 6, 7, { foot: null })];
		const cycles = [cycle('left', 2, 4, 9), cycle('right', 5, 7, 9)];
		const r = footVerticalGrf({ ...base, contacts, cycles }, 'N');
		expect(r.v.left).toEqual([0, 0, 200, 300, 400, 0, 0, 0, 0, 0]);
		expect(r.v.right).toEqual(new Array(n).fill(0)); // p1#1 has no foot
		expect(r.cycles.left[0].excluded).toBeNull();
		expect(r.cycles.right[0].excluded).toBe('excluded');
		expect(r.cycles.right[0].excludedText).toMatch(/not on a plate/);
		// % body weight asked for without a body weight: nothing to add
		expect(footVerticalGrf({ ...base, contacts, cycles }, 'bw').v.left).toEqual(new Array(n).fill(0));
	});
});

describe('copTrails', () => {
	it('maps lab X across and Z down with the plan origin and scale, breaking at undefined points', () => {
		const plan = { origin: { x: 100, y: 50 }, scale: 200 };
		const cop = [{ plate: 'p1', x: [null, 1, 1.1, null, 1.2], y: [null, 0, 0, null, 0], z: [null, 0.1, 0.1, null, -0.05] }];
		const [trail] = copTrails(plan, cop, [contact('p1#0', 0, 4)]);
		// 100 + 1 × 200 = 300, 50 + 0.1 × 200 = 70; 100 + 1.2 × 200 = 340, 50 − 0.05 × 200 = 40
		expect(trail.d).toBe('M300.0 70.0L320.0 70.0M340.0 40.0');
		expect(trail.points).toBe(3);
		expect(trail.start).toEqual({ x: 300, y: 70 });
	});
});

describe('contactFeetFromForm', () => {
	const ids = ['plate1#0', 'plate1#1', 'plate2#0'];
	it('builds contactFeet: automatic left out, none as null', () => {
		const r = contactFeetFromForm(
			[
				['foot.plate1#0', 'left'],
				['foot.plate1#1', 'auto'],
				['foot.plate2#0', 'none'],
				['useFlaggedContacts', 'on']
			],
			ids
		);
		expect(r).toEqual({ ok: true, contactFeet: { 'plate1#0': 'left', 'plate2#0': null } });
	});
	it('refuses an unknown contact and an unknown value, naming the field', () => {
		expect(contactFeetFromForm([['foot.plate9#0', 'left']], ids)).toEqual({
			ok: false,
			problem: 'foot.plate9#0: this run has no contact plate9#0.'
		});
		const bad = contactFeetFromForm([['foot.plate1#0', 'both']], ids);
		expect(bad.ok).toBe(false);
		expect(!bad.ok && bad.problem).toMatch(/^foot\.plate1#0: "both"/);
	});
	it('starts each select at the hand-set foot, else automatic', () => {
		expect(initialChoice(contact('p1#0', 0, 1, { assignedBy: 'user', foot: 'right' }))).toBe('right');
		expect(initialChoice(contact('p1#0', 0, 1, { assignedBy: 'user', foot: null }))).toBe('none');
		expect(initialChoice(contact('p1#0', 0, 1))).toBe('auto');
	});
});

describe('drawnIndices', () => {
	it('keeps every sample of a short series, and each bucket’s smallest and largest of a long one (peaks kept)', () => {
		expect(drawnIndices([1, 2, 3], 10)).toEqual([0, 1, 2]);
		const v = Array.from({ length: 1000 }, (_, k) => (k === 637 ? 5000 : k === 100 ? -300 : Math.sin(k / 50)));
		const idx = drawnIndices(v, 100);
		expect(idx.length).toBeLessThanOrEqual(100);
		expect(idx).toContain(637);
		expect(idx).toContain(100);
		expect([...idx].sort((a, b) => a - b)).toEqual(idx);
		// a bucket with no value (null) keeps its first sample, so the drawing shows the gap
		const gap = drawnIndices([...new Array(50).fill(null), ...new Array(50).fill(1)], 10);
		expect(gap[0]).toBe(0);
	});
});
