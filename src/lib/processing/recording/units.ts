// The unit rule of recording files: which unit spellings a column may carry (header suffix or mapping) for each
// quantity, and how a value in one of them becomes SI, with the factors taken from mathjs's unit definitions.
//
// Only mathjs's unit factories are taken (`create` with `unitDependencies`, so a bundle keeps just those), the
// instance is made on the first conversion, and units are looked up once per column, never per cell: a
// conversion is two numbers, SI = value × mul / div.
import { create, unitDependencies, type Unit } from 'mathjs';

export type AngleUnit = 'deg' | 'rad';
export type PositionUnit = 'm' | 'mm';
export type TimeUnit = 's' | 'ms';
export type ForceUnit = (typeof UNITS.force)[number];
export type MomentUnit = (typeof UNITS.moment)[number];
export type LengthUnit = (typeof UNITS.length)[number];
export type ChannelUnit = AngleUnit | PositionUnit | ForceUnit | MomentUnit | LengthUnit;
/**
 * What a column measures: joint and base angles, base positions, time, and the force-plate quantities — force
 * (N), moment (N·m: a plate's moments and its free moment) and length (m: the centre of pressure).
 */
export type Quantity = 'angle' | 'position' | 'time' | 'force' | 'moment' | 'length';
/** The quantities a channel (not the time column) may have: ExpectedChannel.kind. */
export type ChannelKind = Exclude<Quantity, 'time'>;

/**
 * The spellings accepted per quantity, as a header suffix ("right.knee.flexion (deg)", "plate1.moment.x (N·m)") or
 * in a mapping. Only these: mathjs knows many more (grad, min, lbf, …), and a unit we do not list is refused
 * (`unit-unsupported`). A moment may be written with a middle dot, a star, a point or nothing between N and m.
 */
export const UNITS = {
	angle: ['deg', 'rad'],
	position: ['m', 'mm'],
	time: ['s', 'ms'],
	force: ['N', 'kN'],
	moment: ['N·m', 'N*m', 'Nm', 'N.m', 'N·mm', 'N*mm', 'Nmm', 'N.mm', 'kN·m'],
	length: ['m', 'mm', 'cm']
} as const satisfies Record<Quantity, readonly string[]>;
/** The unit every channel is stored in. */
export const SI_UNIT = { angle: 'rad', position: 'm', time: 's', force: 'N', moment: 'N·m', length: 'm' } as const satisfies Record<
	Quantity,
	string
>;
/** The units a mapping may give a channel column (columnMappingSchema): every channel quantity's, each once. */
export const CHANNEL_UNITS = [
	'deg',
	'rad',
	'm',
	'mm',
	'cm',
	'N',
	'kN',
	'N·m',
	'N*m',
	'Nm',
	'N.m',
	'N·mm',
	'N*mm',
	'Nmm',
	'N.mm',
	'kN·m'
] as const satisfies readonly ChannelUnit[];

/** The channel quantities whose accepted spellings include `unit` (m and mm are both a position and a length). */
export function quantitiesOf(unit: string): ChannelKind[] {
	return (['angle', 'position', 'force', 'moment', 'length'] as const).filter((q) => (UNITS[q] as readonly string[]).includes(unit));
}

/** The accepted spelling `text` of a unit of `quantity`, or undefined when it is none of UNITS[quantity]. */
export function unitOf<Q extends Quantity>(quantity: Q, text: string | undefined): (typeof UNITS)[Q][number] | undefined {
	return (UNITS[quantity] as readonly string[]).includes(text as string) ? (text as (typeof UNITS)[Q][number]) : undefined;
}

/**
 * Our spellings that mathjs writes differently: the degree sign, and the product of a moment written with a middle
 * dot, a star, a point or nothing (N·m, N*m, N.m, Nm → "N m"; N·mm → "N mm").
 */
export function mathjsName(unit: string): string {
	return unit
		.replace(/°/g, 'deg')
		.replace(/^(k?N)[·.*]?(mm|m)$/, '$1 $2')
		.replace(/·/g, ' ');
}

/** value in SI = value × mul / div (one of mul, div is 1). */
export interface Conversion {
	mul: number;
	div: number;
}
export const toSI = (v: number, c: Conversion) => (v * c.mul) / c.div;
export const fromSI = (x: number, c: Conversion) => (x * c.div) / c.mul;

let mathUnit: ((value: number, name: string) => Unit) | null = null;
const unitOfMathjs = (value: number, name: string): Unit =>
	(mathUnit ??= create({ unitDependencies }).unit as (value: number, name: string) => Unit)(value, name);

const conversions = new Map<string, Conversion>();

/**
 * How a value in `unit` becomes a value in `si` (both in our spelling, e.g. "deg" → "rad", "mm" → "m",
 * "N·m" → "N m"), from mathjs: 1 deg = π/180 rad, 1 mm = 0.001 m. When the SI unit holds a whole number of
 * `unit` (1 m = 1000 mm, 1 s = 1000 ms) the value is divided by that number, which gives the nearest double to
 * the exact quotient (1400 mm → 1.4 m), where multiplying by the inexact 0.001 can miss it by one unit in the
 * last place (1400 × 0.001 = 1.4000000000000001); otherwise it is multiplied by the factor. Throws when mathjs
 * does not know a unit or the two measure different things.
 */
export function conversion(unit: string, si: string): Conversion {
	const key = `${unit}\u0000${si}`;
	let c = conversions.get(key);
	if (c) return c;
	const from = mathjsName(unit);
	const to = mathjsName(si);
	const per = unitOfMathjs(1, to).toNumber(from);
	c = Number.isInteger(per) && per > 1 ? { mul: 1, div: per } : { mul: unitOfMathjs(1, from).toNumber(to), div: 1 };
	conversions.set(key, c);
	return c;
}

/** The conversion of a unit of `quantity` to that quantity's SI unit. */
export const toSIOf = (quantity: Quantity, unit: string): Conversion => conversion(unit, SI_UNIT[quantity]);

/**
 * Makes the conversions of every accepted unit (UNITS) now, so that later look-ups need no mathjs work. A parse calls
 * it before it reads its first row (see parseRecording for why).
 */
export function prepareConversions(): void {
	for (const quantity of Object.keys(UNITS) as Quantity[]) for (const unit of UNITS[quantity]) toSIOf(quantity, unit);
}

/** A value given in `from` expressed in `to` (same quantity); unchanged when the units are the same. */
export function convert(v: number, from: string, to: string, quantity: Quantity): number {
	return from === to ? v : fromSI(toSI(v, toSIOf(quantity, from)), toSIOf(quantity, to));
}
