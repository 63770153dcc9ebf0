// Segment endpoints: every row the model uses runs between the model's joint centres (or says why it may stand for
// them), the loader refuses a row that does not, and the de Leva shank is the row that ends at the ankle joint centre.
import { describe, expect, it } from 'vitest';
import fs from 'node:fs';
import {
	tables,
	parseTable,
	checkComplete,
	checkFractionsEndpoints,
	checkStatureEndpoints,
	checkRegressionEndpoints,
	fractionsTableSchema,
	statureTableSchema,
	regressionTableSchema,
	modelEndpointsOf,
	scaleLimbs,
	LIMBS,
	MODEL_ENDPOINTS,
	LENGTH_END,
	SEGMENTS,
	SEGMENT_TABLE_IDS,
	type ParticipantBody
} from '../../../src/lib/anthropometry';

const read = (f: string) => JSON.parse(fs.readFileSync(`anthropometry/${f}`, 'utf8'));
const stature = { file: 'drillis-contini-winter-2009.json', table: tables.drillis };
/** Loads a (changed) copy of a segment-fractions file the way the app does. */
const loadFractions = (data: unknown) =>
	checkFractionsEndpoints('x.json', checkComplete('x.json', parseTable('x.json', fractionsTableSchema, data)), stature);
const near = (a: number, b: number, digits: number) => expect(a).toBeCloseTo(b, digits);

describe('the rows the model uses have the model’s endpoints', () => {
	const people: [string, ParticipantBody][] = [
		['female', { sex: 'female', bodyMass: 64, stature: 1.68 }],
		['male', { sex: 'male', bodyMass: 80, stature: 1.8 }],
		['not reported, mean', { sex: 'not reported', notReportedAs: 'mean', bodyMass: 70, stature: 1.74 }]
	];
	for (const id of SEGMENT_TABLE_IDS) {
		for (const [who, p] of people) {
			if (id === 'zatsiorsky-regression-2002' && p.sex === 'female') continue; // refused: men only
			it(`${id}, ${who}: every segment runs between the model’s joint centres`, () => {
				const m = scaleLimbs(p, id, LIMBS);
				for (const s of m.segments) {
					const need = MODEL_ENDPOINTS[s.segment];
					const applied = s.takenAs ?? { proximal: s.proximal, distal: s.distal };
					expect(applied.proximal, s.key).toBe(need.proximal);
					if (need.distal !== LENGTH_END) expect(applied.distal, s.key).toBe(need.distal);
					else if (id === 'dempster-winter-2009') expect(applied.distal, s.key).toBe(tables.drillis.lengths[s.segment].distal);
					// a stand-in is always explained on the model page
					if (s.takenAs) expect(m.notes.some((n) => n.includes(s.takenAs!.note))).toBe(true);
				}
			});
		}
	}

	it('de Leva’s shank is the row from the knee joint centre to the ankle joint centre, used as it is, for both sexes', () => {
		const shank = tables.deLeva.segments.shank;
		expect([shank.proximal, shank.distal, shank.takenAs]).toEqual(['knee joint centre', 'ankle joint centre', undefined]);
		for (const sex of ['female', 'male'] as const) {
			const m = scaleLimbs({ sex, bodyMass: 70, stature: 1.7 }, 'de-leva-1996', ['right.leg']);
			const s = m.segments.find((x) => x.segment === 'shank')!;
			expect([s.proximal, s.distal, s.takenAs]).toEqual(['knee joint centre', 'ankle joint centre', undefined]);
			expect(s.comDistance.source).toContain('shank KJC–AJC');
		}
		// the regression table takes its geometry from the same row
		const z = scaleLimbs({ sex: 'male', bodyMass: 73, stature: 1.741 }, 'zatsiorsky-regression-2002', ['left.leg']).segments.find(
			(x) => x.segment === 'shank'
		)!;
		expect([z.proximal, z.distal]).toEqual(['knee joint centre', 'ankle joint centre']);
		expect(tables.zatsiorsky.segments.shank).toMatchObject({ proximal: 'knee joint centre', distal: 'ankle joint centre' });
	});

	it('keeps the row to the lateral malleolus in the data, with its endpoints named and why it is not used', () => {
		const other = tables.deLeva.segments.shank.otherRows!;
		expect(other).toHaveLength(1);
		expect(other[0]).toMatchObject({
			proximal: 'knee joint centre',
			distal: 'lateral malleolus',
			unused: expect.stringMatching(/ankle joint centre/)
		});
		// de Leva 1996 Table 4, shank KJC–LMAL (from memory; verified against an independent copy of the table)
		expect(other[0].female!.comFraction.value).toBe(0.4416);
		expect(other[0].male!.comFraction.value).toBe(0.4459);
		expect(other[0].male!.meanLength!.value).toBe(0.434);
	});

	it('every segment row of every table names its endpoints, and Dempster’s hand and foot say they are applied to longer lengths', () => {
		for (const seg of SEGMENTS) {
			for (const row of [
				tables.dempster.segments[seg],
				tables.deLeva.segments[seg],
				...(tables.deLeva.segments[seg].otherRows ?? []),
				tables.zatsiorsky.segments[seg],
				tables.drillis.lengths[seg]
			]) {
				expect(row.proximal, seg).toBeTruthy();
				expect(row.distal, seg).toBeTruthy();
			}
		}
		// Winter 2009 Table 4.1 (from memory): hand wrist axis → knuckle II of the middle finger; foot lateral malleolus → head of metatarsal II
		expect(tables.dempster.segments.hand).toMatchObject({
			distal: 'knuckle II of the middle finger',
			takenAs: { distal: 'tip of the middle finger' }
		});
		expect(tables.dempster.segments.hand.takenAs!.note).toMatch(/not to the fingertip[\s\S]*further from the wrist/);
		expect(tables.dempster.segments.foot).toMatchObject({
			proximal: 'lateral malleolus',
			distal: 'head of metatarsal II',
			takenAs: { proximal: 'ankle joint centre', distal: 'tip of the longest toe' }
		});
		expect(tables.dempster.segments.foot.takenAs!.note).toMatch(/further forward/);
		// de Leva's foot is measured from the heel; the model's foot hangs from the ankle
		expect(modelEndpointsOf(tables.deLeva.segments.foot)).toEqual({ proximal: 'ankle joint centre', distal: 'tip of the longest toe' });
	});
});

describe('the loader refuses rows whose endpoints are not the model’s', () => {
	it('a de Leva shank ending at the lateral malleolus', () => {
		const t = read('de-leva-1996.json');
		const { unused: _, ...lmal } = t.segments.shank.otherRows[0];
		t.segments.shank = lmal;
		expect(() => loadFractions(t)).toThrow(
			'anthropometry/x.json (table de-leva-1996): segments.shank: endpoints knee joint centre → lateral malleolus do not match the model, whose shank runs knee joint centre → ankle joint centre; use a row with these endpoints, or state in takenAs why this row may stand for them'
		);
	});

	it('a stand-in where the table has a row with the model’s own endpoints', () => {
		const t = read('de-leva-1996.json');
		const ajc = { ...t.segments.shank, unused: 'the other row is used here' };
		delete ajc.otherRows;
		const { unused: _, ...lmal } = t.segments.shank.otherRows[0];
		t.segments.shank = {
			...lmal,
			takenAs: { distal: 'ankle joint centre', note: 'the lateral malleolus is near the ankle joint centre, said a test' },
			otherRows: [ajc]
		};
		expect(() => loadFractions(t)).toThrow(
			'anthropometry/x.json (table de-leva-1996): segments.shank: the row knee joint centre → lateral malleolus (taken as knee joint centre → ankle joint centre) stands in for the model’s endpoints, but otherRows.0 (knee joint centre → ankle joint centre) has them: use that row'
		);
	});

	it('Dempster’s hand without its stated stand-in: the fractions end at a knuckle, the length at the fingertip', () => {
		const t = read('dempster-winter-2009.json');
		delete t.segments.hand.takenAs;
		expect(() => loadFractions(t)).toThrow(
			'anthropometry/x.json (table dempster-winter-2009): segments.hand: endpoints wrist joint centre → knuckle II of the middle finger do not match the model, whose hand runs wrist joint centre → tip of the middle finger (its hand ends where the length it is scaled by ends, anthropometry/drillis-contini-winter-2009.json lengths.hand)'
		);
	});

	it('Dempster’s thigh from the greater trochanter without its stated stand-in', () => {
		const t = read('dempster-winter-2009.json');
		delete t.segments.thigh.takenAs;
		expect(() => loadFractions(t)).toThrow(
			/segments\.thigh: endpoints greater trochanter → femoral condyles do not match the model, whose thigh runs hip joint centre → knee joint centre/
		);
	});

	it('a landmark the model does not know, and a stand-in without its reason', () => {
		const t = read('de-leva-1996.json');
		t.segments.thigh.distal = 'knee joint center';
		expect(() => loadFractions(t)).toThrow(/segments\.thigh\.distal: unknown landmark "knee joint center"/);
		const d = read('dempster-winter-2009.json');
		d.segments.foot.takenAs.note = 'close enough';
		expect(() => loadFractions(d)).toThrow(/segments\.foot\.takenAs\.note: say why the row may stand for these endpoints/);
	});

	it('a stature-proportion length between other endpoints', () => {
		const s = read('drillis-contini-winter-2009.json');
		s.lengths.shank.distal = 'medial malleolus';
		expect(() => checkStatureEndpoints('s.json', parseTable('s.json', statureTableSchema, s))).toThrow(
			'anthropometry/s.json (table drillis-contini-winter-2009): lengths.shank: endpoints knee joint centre → medial malleolus do not match the model, whose shank runs knee joint centre → ankle joint centre'
		);
		delete s.lengths.shank.distal;
		expect(() => checkStatureEndpoints('s.json', parseTable('s.json', statureTableSchema, s))).toThrow(
			'lengths.shank: name the proximal and distal endpoints of the length'
		);
	});

	it('a mass regression row for another segment than its geometry row', () => {
		const r = read('zatsiorsky-regression-2002.json');
		r.segments.shank.distal = 'lateral malleolus';
		expect(() =>
			checkRegressionEndpoints('r.json', parseTable('r.json', regressionTableSchema, r), {
				file: 'de-leva-1996.json',
				table: tables.deLeva
			})
		).toThrow(
			'anthropometry/r.json (table zatsiorsky-regression-2002): segments.shank: endpoints knee joint centre → lateral malleolus do not match those of the geometry row it is combined with, anthropometry/de-leva-1996.json segments.shank (knee joint centre → ankle joint centre)'
		);
	});
});

describe('de Leva’s KJC–AJC shank row', () => {
	const ajc = tables.deLeva.segments.shank;
	const lmal = ajc.otherRows![0];

	it('differs from the KJC–LMAL row as the finding says: centre of mass by about 1.5 %, inertias by 2–3 %', () => {
		for (const sex of ['female', 'male'] as const) {
			const a = ajc[sex]!,
				b = lmal[sex]!;
			expect(a.massFraction.value).toBe(b.massFraction.value); // the same segment, only the distal endpoint moves
			const com = b.comFraction.value / a.comFraction.value - 1;
			expect(com).toBeGreaterThan(0.013);
			expect(com).toBeLessThan(0.016);
			for (const axis of ['flexion', 'abduction', 'longitudinal'] as const) {
				const inertia = (b.gyration[axis].value / a.gyration[axis].value) ** 2 - 1;
				expect(inertia, `${sex} ${axis}`).toBeGreaterThan(0.019);
				expect(inertia, `${sex} ${axis}`).toBeLessThan(0.033);
			}
		}
	});

	it('keeps the centre of mass and the radii where the KJC–LMAL row has them, within the table’s rounding (how its mean length was derived)', () => {
		for (const sex of ['female', 'male'] as const) {
			const a = ajc[sex]!,
				b = lmal[sex]!;
			const La = a.meanLength!.value,
				Lb = b.meanLength!.value;
			// CM fractions are printed to 0.01 %, lengths to 0.1 mm: the absolute distances agree to 0.05 mm
			expect(Math.abs(a.comFraction.value * La - b.comFraction.value * Lb)).toBeLessThan(0.00005);
			// radii are printed to 0.1 %: half a unit on each side, 0.0005 × (La + Lb)
			for (const axis of ['flexion', 'abduction', 'longitudinal'] as const) {
				expect(Math.abs(a.gyration[axis].value * La - b.gyration[axis].value * Lb), `${sex} ${axis}`).toBeLessThanOrEqual(
					0.0005 * (La + Lb)
				);
			}
		}
	});
});

describe('scaled shank by hand (de Leva 1996 Table 4, shank KJC–AJC; from memory)', () => {
	const shankOf = (p: ParticipantBody) => scaleLimbs(p, 'de-leva-1996', ['right.leg']).segments.find((s) => s.segment === 'shank')!;
	/** Length (m), mass (kg), COM distance (m) and the flexion, abduction and longitudinal inertias (kg·m²) by hand. */
	const expectShank = (p: ParticipantBody, [length, mass, com, flexion, abduction, longitudinal]: number[]) => {
		const s = shankOf(p);
		near(s.length.value, length, 6);
		near(s.mass.value, mass, 9);
		near(s.comDistance.value, com, 6);
		near(s.inertia.flexion.value, flexion, 6);
		near(s.inertia.abduction.value, abduction, 6);
		near(s.inertia.longitudinal.value, longitudinal, 6);
	};

	it('a man of 80 kg and 1.80 m, length from the mean length', () => {
		// L = 0.4403 m × 1.80 / 1.741 = 0.455221 m; m = 0.0433 × 80 = 3.464 kg; COM 0.4395 L = 0.200070 m;
		// I_flex = 3.464 × (0.246 L)² = 0.043440; I_abd = 3.464 × (0.251 L)² = 0.045224; I_long = 3.464 × (0.102 L)² = 0.007468 kg·m²
		expectShank({ sex: 'male', bodyMass: 80, stature: 1.8 }, [0.455221, 3.464, 0.20007, 0.04344, 0.045224, 0.007468]);
	});

	it('a woman of 64 kg and 1.68 m, length from the mean length', () => {
		// L = 0.4387 m × 1.68 / 1.735 = 0.424793 m; m = 0.0481 × 64 = 3.0784 kg; COM 0.4352 L = 0.184870 m;
		// I_flex = 3.0784 × (0.263 L)² = 0.038423; I_abd = 3.0784 × (0.267 L)² = 0.039601; I_long = 3.0784 × (0.092 L)² = 0.004702 kg·m²
		expectShank({ sex: 'female', bodyMass: 64, stature: 1.68 }, [0.424793, 3.0784, 0.18487, 0.038423, 0.039601, 0.004702]);
	});

	it('a man with a measured shank of 0.43 m: the row’s fractions of that length (1.5 % nearer the knee than the KJC–LMAL row’s)', () => {
		// COM 0.4395 × 0.43 = 0.188985 m (the KJC–LMAL row would give 0.4459 × 0.43 = 0.191737 m);
		// I_flex = 3.464 × (0.246 × 0.43)² = 0.038760 kg·m² (KJC–LMAL: 3.464 × (0.249 × 0.43)² = 0.039711)
		const s = shankOf({ sex: 'male', bodyMass: 80, stature: 1.8, measuredLengths: { 'right.shank': 0.43 } });
		near(s.comDistance.value, 0.188985, 9);
		near(s.inertia.flexion.value, 0.03876011, 8);
		near(s.inertia.abduction.value, 0.04035174, 8);
		near(s.inertia.longitudinal.value, 0.0066637, 8);
	});
});
