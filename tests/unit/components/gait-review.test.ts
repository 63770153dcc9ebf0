// The gait review components rendered on the server from a small hand-built GaitAnswer: the headings and test ids the
// e2e check looks for, the empty parts, "—" for undefined figures, the per-foot cycle counts, the excluded cycles with
// their reasons and the contacts' foot choices. The numbers are the fixture's own (hand-worked below).
import { describe, expect, it } from 'vitest';
import { render } from 'svelte/server';
import GaitReview from '../../../src/lib/components/gait/GaitReview.svelte';
import type { GaitData } from '../../../src/lib/components/gait/gait-plot';
import type { ContactView, GaitCycleView, StatView } from '../../../src/lib/types/gait';
import { contactView, cycleView } from './gait-views';

const HZ = 100;
const N = 300;
const t = Array.from({ length: N }, (_, k) => k / HZ);
const halfSine = (a: number, b: number, peak: number) =>
	t.map((_, k) => (k >= a && k <= b ? peak * Math.sin((Math.PI * (k - a + 1)) / (b - a + 2)) : 0));
const zeros = () => new Array<number>(N).fill(0);

const contact = (id: string, start: number, end: number, more: Partial<ContactView> = {}) => contactView(id, start, end, more, HZ);
const cycle = (
	foot: 'left' | 'right',
	a: number,
	off: number | null,
	b: number,
	excluded: GaitCycleView['excluded'] = null,
	text: string | null = null
) => cycleView(foot, a, off, b, { endSource: 'kinematic', excluded, excludedText: text, hz: HZ });
const stat = (mean: number | null, sd: number | null, n: number): StatView => ({ mean, sd, n });
function foot(f: 'left' | 'right', cycles: number) {
	return {
		foot: f,
		cycles,
		cadence: stat(100, null, 1),
		cycleTimeS: stat(1.2, null, 1),
		stanceTimeS: stat(0.6, null, 1),
		swingTimeS: stat(0.6, null, 1),
		stancePercent: stat(50, null, 1),
		swingPercent: stat(50, null, 1),
		doubleSupportS: stat(0.1, null, 1),
		doubleSupportPercent: stat(8.3, null, 1),
		stepLengthM: stat(null, null, 0),
		strideLengthM: stat(null, null, 0),
		speedMS: stat(null, null, 0)
	};
}

const plate = (name: string, x0: number) => ({
	name,
	corners: [
		[x0, 0, -0.2],
		[x0 + 0.6, 0, -0.2],
		[x0 + 0.6, 0, 0.2],
		[x0, 0, 0.2]
	] as [number, number, number][],
	axes: [
		[1, 0, 0],
		[0, 0, -1],
		[0, 1, 0]
	] as [number, number, number][],
	originDepthM: 0.04,
	output: 'forces-moments' as const
});

const copOf = (a: number, b: number, x0: number) => ({
	x: t.map((_, k) => (k >= a && k <= b ? x0 + 0.1 + (0.25 * (k - a)) / (b - a) : null)),
	y: t.map((_, k) => (k >= a && k <= b ? 0 : null)),
	z: t.map((_, k) => (k >= a && k <= b ? -0.05 : null))
});

const data: GaitData = {
	runId: 'r1',
	gait: true,
	bodyMassKg: 70,
	bodyWeightN: 686.5,
	t,
	forces: { fileName: 'walk.forces.csv', sampleHz: 1000, angleHz: HZ, ratio: 10, cutoffHz: 6, thresholdN: 20 },
	plates: [plate('plate1', 1), plate('plate2', 1.6)],
	grf: [
		{
			plate: 'plate1',
			x: zeros(),
			y: halfSine(20, 80, 700).map((v, k) => v + halfSine(200, 240, 500)[k]),
			z: zeros(),
			percentBodyWeight: null,
			freeMoment: { x: zeros(), y: zeros(), z: zeros() }
		},
		{
			plate: 'plate2',
			x: zeros(),
			y: halfSine(70, 130, 700),
			z: zeros(),
			percentBodyWeight: null,
			freeMoment: { x: zeros(), y: zeros(), z: zeros() }
		}
	],
	cop: [
		{ plate: 'plate1', ...copOf(20, 80, 1) },
		{ plate: 'plate2', ...copOf(70, 130, 1.6) }
	],
	contacts: [
		contact('plate1#0', 20, 80),
		contact('plate2#0', 70, 130, { foot: 'right', assignedBy: 'user' }),
		contact('plate1#1', 200, 240, { foot: null, assignedBy: null, offPlate: true, used: false, reason: 'no foot assigned' })
	],
	events: [],
	cycles: [
		cycle('left', 20, 80, 140),
		cycle('right', 70, 130, 190),
		cycle('left', 140, null, 260, 'no-foot-off', 'no foot off of this foot between its two foot strikes')
	],
	spatiotemporal: { left: foot('left', 1), right: foot('right', 1), lengthBasis: null }
};

const props = { data, seriesUrl: '/api/studies/s/runs/r1/series', dofs: [] as string[], canRerun: true };
const html = render(GaitReview, { props }).body.replace(/<!--.*?-->/g, '');
const section = (id: string) => {
	const at = html.indexOf(`data-testid="${id}"`);
	expect(at, id).toBeGreaterThan(-1);
	const start = html.lastIndexOf('<section', at);
	return html.slice(start, html.indexOf('</section>', at));
};

describe('GaitReview', () => {
	it('has each panel with its heading and test id', () => {
		for (const [id, heading] of [
			['grf-panel', 'Ground reaction force'],
			['cop-path', 'Centre of pressure'],
			['gait-cycles', 'Gait cycles'],
			['spatiotemporal-table', 'Spatiotemporal parameters'],
			['contacts-table', 'Foot contacts']
		]) {
			expect(section(id)).toMatch(new RegExp(`<h2[^>]*>${heading}</h2>`));
		}
		expect(html).toContain('For research use.');
	});

	it('draws one GRF panel per plate with its contacts by foot, the flagged one marked', () => {
		const grf = section('grf-panel');
		expect(grf.match(/data-testid="grf-plate"/g)).toHaveLength(2);
		expect(grf).toMatch(/data-contact="plate1#1" data-foot=""/);
		expect(grf).toContain('? ⚑');
		// no body mass figures per sample: the % body weight switch is there but off
		expect(grf).toMatch(/value="bw" disabled/);
	});

	it('draws the CoP of the two contacts that have one, by foot', () => {
		const cop = section('cop-path');
		expect(cop.match(/data-testid="cop-trail"/g)).toHaveLength(2);
		expect(cop).toMatch(/data-contact="plate2#0" data-foot="right"/);
	});

	it('gives the vertical GRF cycles with n per foot and lists the excluded cycle with its reason', () => {
		const cycles = section('gait-cycles');
		// left: 20→140 starts on plate1#0 and its foot off (80) ends it; right: 70→190 on plate2#0
		expect(cycles).toMatch(/Left \(n = 1 cycle\); foot off 50\.0 %/);
		expect(cycles).toMatch(/Right \(n = 1 cycle\); foot off 50\.0 %/);
		expect(cycles).toContain('Left foot, 1.400–2.600 s: no foot off of this foot between its two foot strikes');
		expect(cycles.match(/data-testid="foot-off-line"/g)).toHaveLength(2);
	});

	it('shows "—" for undefined figures and states the length basis', () => {
		const st = section('spatiotemporal-table');
		expect(st).toMatch(/data-parameter="stepLengthM"[\s\S]*?>—<\/td>/);
		expect(st).toMatch(/data-parameter="cadence"[\s\S]*?>100\.0<\/td>/);
		expect(st).toContain('Length basis: none');
	});

	it('lists every contact with a foot choice (hand-set feet kept) and the re-run action', () => {
		const ct = section('contacts-table');
		expect(ct.match(/data-testid="contact-row"/g)).toHaveLength(3);
		expect(ct).toContain('name="foot.plate2#0"');
		expect(ct).toMatch(/No: no foot assigned/);
		expect(ct).toContain('Re-run with these feet');
		expect(ct).toContain('action="?/rerunFeet"');
		expect(ct).toContain('1 contact has no foot');
	});

	it('has no re-run controls for someone who may not start runs', () => {
		const ro = render(GaitReview, { props: { ...props, canRerun: false } }).body;
		expect(ro).not.toContain('Re-run with these feet');
		expect(ro).not.toContain('contact-foot-select');
	});

	it('opens the gait cycles on the joint moment of the first DOF where the run has joint results', () => {
		const withDofs = render(GaitReview, { props: { ...props, dofs: ['left.knee.flexion'] } }).body.replace(/<!--.*?-->/g, '');
		expect(withDofs).toMatch(/<option value="moment" selected="">Joint moment<\/option>/);
		expect(withDofs).toContain('Reading the moment of Left knee flexion…');
	});

	it('shows an empty state without plate data', () => {
		const empty = render(GaitReview, { props: { ...props, data: { ...data, grf: [], cop: [], contacts: [] } } }).body;
		expect(empty).toContain('No plate data');
	});
});
