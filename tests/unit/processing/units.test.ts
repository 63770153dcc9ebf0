// The unit rule of recording files (src/lib/processing/recording/units.ts): factors from mathjs, checked against
// mathjs itself and against the SI definitions.
import { create, unitDependencies } from 'mathjs';
import { describe, expect, test } from 'vitest';
import { conversion, convert, fromSI, mathjsName, SI_UNIT, toSI, toSIOf, unitOf, UNITS } from '../../../src/lib/processing/recording/units';

const { unit } = create({ unitDependencies });
const factor = (u: string, si: string) => {
	const c = conversion(u, si);
	return c.mul / c.div;
};

describe('unit factors', () => {
	test('every accepted unit converts by mathjs’s own factor', () => {
		for (const q of ['angle', 'position', 'time'] as const)
			for (const u of UNITS[q]) expect(factor(u, SI_UNIT[q]), `${u} → ${SI_UNIT[q]}`).toBe(unit(1, u).toNumber(SI_UNIT[q]));
	});

	test('handbook values: 1° = π/180 rad, 1 mm = 0.001 m, 1 ms = 0.001 s', () => {
		// BIPM, The International System of Units (SI Brochure, 9th ed., 2019): Table 8 (degree: 1° = (π/180) rad)
		// and Table 7 (prefix milli = 10⁻³).
		expect(factor('deg', 'rad')).toBe(Math.PI / 180);
		expect(factor('°', 'rad')).toBe(Math.PI / 180);
		expect(factor('mm', 'm')).toBe(0.001);
		expect(factor('ms', 's')).toBe(0.001);
		expect(factor('rad', 'rad')).toBe(1);
		expect(factor('m', 'm')).toBe(1);
	});

	test('a whole number of units per SI unit divides, so the result is the nearest double (1400 mm = 1.4 m exactly)', () => {
		expect(conversion('mm', 'm')).toEqual({ mul: 1, div: 1000 });
		expect(toSI(1400, toSIOf('position', 'mm'))).toBe(1.4);
		expect(toSI(15, toSIOf('angle', 'deg'))).toBe(15 * (Math.PI / 180));
		expect(fromSI(Math.PI, toSIOf('angle', 'deg'))).toBe(180);
		expect(convert(720, 'deg', 'rad', 'angle')).toBe(4 * Math.PI);
		expect(convert(100, 'm', 'mm', 'position')).toBe(100_000);
	});

	test('our spellings for mathjs: ° is deg, the middle dot of N·m a space', () => {
		expect(mathjsName('°')).toBe('deg');
		expect(mathjsName('N·m')).toBe('N m');
		expect(factor('N·m', 'J')).toBe(1);
		expect(factor('kN·m', 'N·m')).toBe(1000);
	});

	test('only our spellings are accepted, though mathjs knows more (grad, min, cm)', () => {
		expect(unitOf('angle', 'deg')).toBe('deg');
		expect(unitOf('angle', 'grad')).toBeUndefined();
		expect(unitOf('time', 'min')).toBeUndefined();
		expect(unitOf('position', 'cm')).toBeUndefined();
		expect(unitOf('position', 'deg')).toBeUndefined();
	});
});
