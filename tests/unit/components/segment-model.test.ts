// @vitest-environment node
// Segment-model components rendered on the server: values, provenance marks, drawing geometry and the table comparison.
import { describe, expect, it } from 'vitest';
import { render } from 'svelte/server';
import SegmentTable from '../../../src/lib/components/segment-model/SegmentTable.svelte';
import SegmentTreeDrawing from '../../../src/lib/components/segment-model/SegmentTreeDrawing.svelte';
import TableComparison from '../../../src/lib/components/segment-model/TableComparison.svelte';
import { compareTables, scaleLimbs, SEGMENT_TABLES, SEGMENT_TABLE_IDS, type ParticipantBody } from '../../../src/lib/anthropometry';

const male: ParticipantBody = { sex: 'male', bodyMass: 80, stature: 1.8, measuredLengths: { 'right.thigh': 0.45 } };
const scaled = scaleLimbs(male, 'de-leva-1996', ['right.leg', 'right.arm']);

/** The HTML of one element found by an attribute, up to its closing tag (no nesting of the same tag inside). */
function element(html: string, tag: string, attr: string): string {
	const start = html.indexOf(`<${tag}`, html.lastIndexOf('<', html.indexOf(attr)));
	expect(start, `${tag} with ${attr}`).toBeGreaterThanOrEqual(0);
	const end = html.indexOf(`</${tag}>`, start);
	return html.slice(start, end + tag.length + 3);
}
const cells = (row: string) =>
	[...row.matchAll(/<td[^>]*data-field="(\w+)"[^>]*data-kind="(\w+)"[^>]*>([\s\S]*?)<\/td>/g)].map((m) => ({
		field: m[1],
		kind: m[2],
		body: m[3]
	}));
const attr = (tag: string, name: string) => Number(new RegExp(`\\s${name}="([^"]+)"`).exec(tag)![1]);
/** Server output without Svelte's hydration markers. */
const clean = (html: string) => html.replace(/<!--[\s\S]*?-->/g, '');
const decode = (s: string) =>
	s
		.replace(/&amp;/g, '&')
		.replace(/&lt;/g, '<')
		.replace(/&gt;/g, '>')
		.replace(/&quot;/g, '"')
		.replace(/&#39;/g, "'");

describe('SegmentTable', () => {
	const body = clean(render(SegmentTable, { props: { scaled } }).body);

	it('has one row per segment with every value to four significant digits', () => {
		expect(scaled.segments).toHaveLength(6);
		for (const s of scaled.segments) {
			const row = element(body, 'tr', `data-segment="${s.key}"`);
			expect(row).toContain(`${s.proximal} → ${s.distal}`);
			const got = Object.fromEntries(cells(row).map((c) => [c.field, c]));
			const want = {
				length: s.length.value,
				mass: s.mass.value,
				comDistance: s.comDistance.value,
				inertiaFlexion: s.inertia.flexion.value,
				inertiaAbduction: s.inertia.abduction.value,
				inertiaLongitudinal: s.inertia.longitudinal.value
			};
			for (const [field, v] of Object.entries(want)) {
				const shown = /<span data-value="?"?>([^<]+)<\/span>/.exec(got[field].body)![1];
				expect(shown, `${s.key} ${field}`).toBe(v.toPrecision(4));
				expect(Number(shown)).toBeCloseTo(v, 4 - Math.ceil(Math.log10(Math.abs(v))));
			}
		}
	});

	it('marks the measured thigh length by word and by icon, with its source for screen readers', () => {
		const row = element(body, 'tr', 'data-segment="right.thigh"');
		const length = cells(row).find((c) => c.field === 'length')!;
		expect(length.kind).toBe('measured');
		expect(length.body).toContain('0.4500');
		expect(length.body).toMatch(/data-mark="measured"[^>]*>\s*<svg aria-hidden="true"[\s\S]*?<\/svg>\s*measured/);
		expect(length.body).toMatch(/class="sr-only">, source: measured for this participant/);
		// Only the entered length is measured: the shank's is estimated and carries no mark.
		const shank = cells(element(body, 'tr', 'data-segment="right.shank"')).find((c) => c.field === 'length')!;
		expect(shank.kind).toBe('estimated');
		expect(shank.body).not.toContain('data-mark');
		expect(body.match(/data-mark="measured"/g)).toHaveLength(1);
	});

	it('gives each value its source as a tooltip', () => {
		const row = element(body, 'tr', 'data-segment="right.shank"');
		const s = scaled.segments.find((x) => x.key === 'right.shank')!;
		expect(decode(row)).toContain(`title="${s.mass.source}"`);
	});

	it('names units in the headers, and the table, citation, sex rule and notes in the caption', () => {
		for (const h of [
			'Length (m)',
			'Mass (kg)',
			'Centre of mass from proximal joint (m)',
			'Flexion axis, medio-lateral (kg·m²)',
			'Long axis (kg·m²)'
		])
			expect(body).toContain(h);
		const caption = decode(element(body, 'caption', '<caption'));
		expect(caption).toContain(scaled.table.title);
		expect(caption).toContain(scaled.table.citation);
		expect(caption).toContain('participant reported male');
		for (const note of scaled.notes) expect(caption).toContain(note);
	});
});

describe('SegmentTable, a row applied between the model’s endpoints rather than its own', () => {
	it('shows the table’s endpoints, the endpoints they are applied as, and the reason among the notes', () => {
		const dempster = scaleLimbs(male, 'dempster-winter-2009', ['right.arm']);
		const html = clean(render(SegmentTable, { props: { scaled: dempster } }).body);
		const hand = element(html, 'tr', 'data-segment="right.hand"');
		// Winter 2009 Table 4.1 (from memory): the hand runs from the wrist axis to knuckle II of the middle finger
		expect(hand).toContain('wrist joint centre → knuckle II of the middle finger');
		expect(hand).toMatch(/data-taken-as[^>]*>applied as wrist joint centre → tip of the middle finger/);
		expect(decode(element(html, 'caption', '<caption'))).toContain(
			'Hand (Winter 2009, Table 4.1): Winter’s hand fractions run from the wrist axis to knuckle II of the middle finger, not to the fingertip.'
		);
		// de Leva's upper arm runs between joint centres: nothing to apply
		const deLeva = clean(render(SegmentTable, { props: { scaled } }).body);
		expect(element(deLeva, 'tr', 'data-segment="right.upperarm"')).not.toContain('data-taken-as');
	});
});

describe('SegmentTreeDrawing', () => {
	const front = clean(render(SegmentTreeDrawing, { props: { scaled } }).body);
	const side = clean(render(SegmentTreeDrawing, { props: { scaled, view: 'side' } }).body);
	const svgTag = (html: string) => /<svg[^>]*data-testid="segment-tree-drawing"[^>]*>/.exec(html)![0];
	const joint = (html: string, name: string) => new RegExp(`<circle[^>]*data-joint="${name}"[^>]*>`).exec(html)![0];

	it('is an image with a summary label and a title', () => {
		const tag = svgTag(front);
		expect(tag).toContain('role="img"');
		expect(tag).toMatch(/aria-label="[^"]*6 segments[^"]*6 joint centres and 6 centres of mass/);
		expect(front).toMatch(/<title>Segment model of the right leg and right arm/);
	});

	it('draws one circle per joint centre: hip, knee, ankle, shoulder, elbow, wrist', () => {
		const names = [...front.matchAll(/<circle[^>]*data-kind="joint"[^>]*data-joint="([\w.]+)"/g)].map((m) => m[1]);
		expect(names.sort()).toEqual(['right.ankle', 'right.elbow', 'right.hip', 'right.knee', 'right.shoulder', 'right.wrist']);
		expect(front.match(/<line[^>]*data-segment=/g)).toHaveLength(6);
		expect(front.match(/data-com="/g)).toHaveLength(6);
	});

	it('puts the knee one measured thigh length (0.45 m) below the hip at the drawing scale', () => {
		for (const html of [front, side]) {
			const scale = attr(svgTag(html), 'data-scale');
			const hip = joint(html, 'right.hip'),
				knee = joint(html, 'right.knee');
			// At q = 0 the thigh hangs straight down (−Y), so on screen (y down) the knee is L × scale lower, same x.
			expect(attr(knee, 'cx')).toBeCloseTo(attr(hip, 'cx'), 1);
			expect(attr(knee, 'cy') - attr(hip, 'cy')).toBeCloseTo(0.45 * scale, 1);
		}
	});

	it('fits the drawing inside the viewBox and labels the scale bar in metres with the drawing scale', () => {
		const [, , w, h] = /viewBox="([^"]+)"/.exec(svgTag(front))![1].split(' ').map(Number);
		for (const m of front.matchAll(/<circle[^>]*data-joint[^>]*>/g)) {
			expect(attr(m[0], 'cx')).toBeGreaterThan(0);
			expect(attr(m[0], 'cx')).toBeLessThan(w);
			expect(attr(m[0], 'cy')).toBeGreaterThan(0);
			expect(attr(m[0], 'cy')).toBeLessThan(h);
		}
		const bar = /<g[^>]*data-layer="scale-bar"[^>]*>/.exec(front)![0];
		const metres = attr(bar, 'data-metres');
		expect(attr(bar, 'data-length')).toBeCloseTo(metres * attr(svgTag(front), 'data-scale'), 6);
		expect(front).toMatch(new RegExp(`data-scale-label[^>]*>${metres} m</text>`));
	});

	it('labels the axes per view', () => {
		expect(front).toMatch(/data-axis="horizontal"[^>]*>Z right</);
		expect(side).toMatch(/data-axis="horizontal"[^>]*>X anterior</);
		expect(front).toMatch(/data-axis="vertical"[^>]*>Y up</);
	});
});

describe('TableComparison', () => {
	const tables = SEGMENT_TABLE_IDS.map((id) => ({ id, title: SEGMENT_TABLES[id].title }));

	it('shows every table side by side and the spread as a percentage', () => {
		const rows = compareTables({ sex: 'male', bodyMass: 80, stature: 1.8 }, ['right.leg', 'right.arm']);
		const body = clean(render(TableComparison, { props: { rows, tables } }).body);
		for (const row of rows) {
			const tr = element(body, 'tr', `data-segment="${row.key}"`);
			for (const t of tables) {
				const e = row.byTable[t.id];
				if ('unavailable' in e) throw new Error('every table applies to a man');
				expect(tr).toMatch(new RegExp(`data-table="${t.id}" data-field="mass">${e.mass.toPrecision(4)}<`));
				expect(tr).toMatch(new RegExp(`data-table="${t.id}" data-field="inertiaFlexion">${e.inertiaFlexion.toPrecision(4)}<`));
			}
			expect(tr).toContain(`data-spread="mass">${(row.spread.mass * 100).toFixed(1)} %`);
		}
		expect(body).toContain('Spread = (largest − smallest) ÷ mean');
	});

	it('gives the reason the regression table is unavailable for a woman', () => {
		const rows = compareTables({ sex: 'female', bodyMass: 62, stature: 1.65 }, ['right.leg']);
		const body = clean(render(TableComparison, { props: { rows, tables } }).body);
		const reason = (rows[0].byTable['zatsiorsky-regression-2002'] as { unavailable: string }).unavailable;
		expect(reason).toMatch(/men only/);
		const cell = element(body, 'td', 'data-table="zatsiorsky-regression-2002" data-unavailable');
		expect(cell).toContain('Not available');
		expect(decode(cell)).toContain(reason);
		expect(body.match(/data-unavailable/g)).toHaveLength(rows.length);
	});
});
