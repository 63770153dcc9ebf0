// The table files in /anthropometry: all load and validate; every validation rule rejects a broken copy.
import { describe, expect, it } from 'vitest';
import fs from 'node:fs';
import {
	tables,
	parseTable,
	fractionsTableSchema,
	statureTableSchema,
	regressionTableSchema,
	SEGMENTS
} from '../../../src/lib/anthropometry';

const read = (f: string) => JSON.parse(fs.readFileSync(`anthropometry/${f}`, 'utf8'));
const dempster = () => read('dempster-winter-2009.json');

describe('published tables', () => {
	it('every file in anthropometry/ is loaded and valid', () => {
		const files = fs
			.readdirSync('anthropometry')
			.filter((f) => f.endsWith('.json'))
			.sort();
		expect(files).toEqual([
			'de-leva-1996.json',
			'dempster-winter-2009.json',
			'drillis-contini-winter-2009.json',
			'zatsiorsky-regression-2002.json'
		]);
		expect(Object.keys(tables.dempster.segments).sort()).toEqual([...SEGMENTS].sort());
		expect(tables.deLeva.sexes).toEqual(['female', 'male']);
	});

	it('every number carries a source, and values recalled rather than read say so', () => {
		const walk = (v: unknown, path: string, out: string[]) => {
			if (v && typeof v === 'object') {
				const o = v as Record<string, unknown>;
				if ('value' in o && typeof o.value === 'number') {
					expect(typeof o.source, path).toBe('string');
					out.push(String(o.source));
				}
				for (const [k, x] of Object.entries(o)) walk(x, `${path}.${k}`, out);
			}
		};
		for (const f of fs.readdirSync('anthropometry').filter((x) => x.endsWith('.json'))) {
			const sources: string[] = [];
			walk(read(f), f, sources);
			expect(sources.length).toBeGreaterThan(5);
			for (const s of sources) expect(s).toMatch(/from memory|not in Table|not recalled|chosen|Momentry/);
		}
	});
});

describe('validation rules', () => {
	it('a fraction must lie in (0, 1)', () => {
		const t = dempster();
		t.segments.thigh.any.massFraction.value = 1.2;
		expect(() => parseTable('x.json', fractionsTableSchema, t)).toThrow(
			'anthropometry/x.json: segments.thigh.any.massFraction.value: must be below 1'
		);
		t.segments.thigh.any.massFraction.value = 0;
		expect(() => parseTable('x.json', fractionsTableSchema, t)).toThrow(/massFraction.value: must be above 0/);
	});

	it('every number needs a source', () => {
		const t = dempster();
		t.segments.shank.any.comFraction.source = '';
		expect(() => parseTable('x.json', fractionsTableSchema, t)).toThrow(
			'segments.shank.any.comFraction.source: every number needs a source'
		);
		delete t.segments.shank.any.comFraction.source;
		expect(() => parseTable('x.json', fractionsTableSchema, t)).toThrow(/segments\.shank\.any\.comFraction\.source/);
	});

	it('the full citation is required', () => {
		const t = dempster();
		t.citation = 'Winter';
		expect(() => parseTable('x.json', fractionsTableSchema, t)).toThrow('citation: needs the full citation');
	});

	it('every column has a stated meaning', () => {
		const t = dempster();
		t.columns.massFraction = '';
		expect(() => parseTable('x.json', fractionsTableSchema, t)).toThrow(/columns\.massFraction/);
	});

	it('segment endpoints are required', () => {
		const t = dempster();
		delete t.segments.foot.proximal;
		expect(() => parseTable('x.json', fractionsTableSchema, t)).toThrow(/segments\.foot\.proximal/);
	});

	it('stature fractions and regression coefficients are checked the same way', () => {
		const s = read('drillis-contini-winter-2009.json');
		s.lengths.thigh.fraction.value = -0.2;
		expect(() => parseTable('s.json', statureTableSchema, s)).toThrow(/lengths\.thigh\.fraction\.value: must be above 0/);
		const r = read('zatsiorsky-regression-2002.json');
		r.segments.hand.b1.value = 'x';
		expect(() => parseTable('r.json', regressionTableSchema, r)).toThrow(/segments\.hand\.b1\.value/);
	});
});
