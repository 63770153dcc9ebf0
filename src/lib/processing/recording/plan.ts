// The plan of a parse, made from the header once: which column is time (and its unit), and which column feeds
// which expected channel, in which unit, with or without a sign flip — from our layout, or from a mapping.
import type { CheckedColumn } from './checks';
import { columnMappingSchema, isTimeName, type ColumnMapping, type HeaderColumn } from './header';
import { isSchemeName, plateChannelParts } from './layout';
import type { ProblemList } from './problems';
import type { ExpectedChannel, ParseOptions } from './types';
import { quantitiesOf, SI_UNIT, unitOf, UNITS, type ChannelKind, type TimeUnit } from './units';

/** What a channel kind is called in messages. */
const KIND_NAME: Record<ChannelKind, string> = {
	angle: 'an angle',
	position: 'a position',
	force: 'a force',
	moment: 'a moment',
	length: 'a length (centre of pressure)'
};
/** The units a kind takes, as a message lists them: " (N)" or " (kN)". */
const takes = (kind: ChannelKind) => {
	const u = UNITS[kind].map((x) => `" (${x})"`);
	return `${u.slice(0, -1).join(', ')} or ${u.at(-1)}`;
};
/** The header suffix we suggest for a channel: degrees for angles, else the SI unit. */
const suffixOf = (e: ExpectedChannel) => ` (${e.kind === 'angle' ? 'deg' : SI_UNIT[e.kind]})`;
/** Position and length are one dimension (m and mm are both); a unit of another dimension is refused as such. */
const dimension = (k: ChannelKind) => (k === 'position' ? 'length' : k);

/** The message for a unit a channel's kind does not take: of another dimension, or not one we accept. */
function unitMessage(header: string, unit: string, channel: ExpectedChannel): { code: string; message: string } {
	const other = quantitiesOf(unit).filter((q) => dimension(q) !== dimension(channel.kind));
	if (other.length > 0 && !quantitiesOf(unit).some((q) => dimension(q) === dimension(channel.kind))) {
		return {
			code: 'unit-unsupported',
			message: `Column "${header}" is ${KIND_NAME[channel.kind]} (${channel.name}), but its unit ${unit} measures ${KIND_NAME[other[0]]}; ${channel.kind} columns take ${takes(channel.kind)}. Check the column and its unit.`
		};
	}
	return {
		code: 'unit-unsupported',
		message: `Unknown unit "${unit}" in "${header}"; ${channel.kind} columns take ${takes(channel.kind)}.`
	};
}

/** One channel column of the plan. */
export interface PlannedColumn extends CheckedColumn {
	flip: boolean;
}

type Plan = { ok: true; timeIndex: number; timeUnit: TimeUnit; columns: PlannedColumn[] } | { ok: false; needsMapping?: boolean };

export function planFromScheme(header: HeaderColumn[], opts: ParseOptions, problems: ProblemList): Plan {
	const expected = new Map(opts.expected.map((e) => [e.name, e]));
	const times = header.map((h, i) => ({ h, i })).filter(({ h }) => isTimeName(h.name));
	let needsMapping = false;
	let timeIndex = -1;
	let timeUnit: TimeUnit = 's';
	if (times.length === 0) {
		const near = header.find((h) => /^time\b|^t$/i.test(h.name) || /\btime\b/i.test(h.text));
		problems.add({
			row: 1,
			code: 'no-time-column',
			message: `There is no time column. Name it "time" (seconds), "time (s)" or "time (ms)"${near ? `; "${near.text}" is not one of these, so map it in the mapping step` : ''}.`
		});
		needsMapping = true;
	} else if (times.length > 1) {
		problems.add({
			row: 1,
			column: times[1].h.text,
			code: 'duplicate-time-column',
			message: `There are ${times.length} time columns (${times.map((t) => `"${t.h.text}"`).join(', ')}); keep one, or map the others to "ignore".`
		});
		needsMapping = true;
	} else {
		const t = times[0];
		timeIndex = t.i;
		const unit = unitOf('time', t.h.unit ?? 's');
		if (unit) timeUnit = unit;
		else {
			problems.add({
				row: 1,
				column: t.h.text,
				code: 'unit-unsupported',
				message: `Unknown time unit "${t.h.unit}" in "${t.h.text}"; use "time (s)" or "time (ms)".`
			});
		}
	}
	const targets: PlannedColumn[] = [];
	header.forEach((h, i) => {
		if (isTimeName(h.name)) return;
		const channel = expected.get(h.name);
		if (!channel) {
			const plate = plateChannelParts(h.name);
			const plates = [...new Set(opts.expected.map((e) => plateChannelParts(e.name)?.plate).filter((p) => p !== undefined))];
			const hint =
				plate && !plates.includes(plate.plate)
					? `it is a channel of force plate "${plate.plate}", which this trial does not use (${plates.length ? `its plates: ${plates.join(', ')}` : 'it uses no force plate'}); remove the column, map it to "ignore", or set the plate up for the trial`
					: isSchemeName(h.name)
						? `it is one of our channel names, but this session's model does not use it (expected: ${opts.expected.map((e) => e.name).join(', ')}); remove the column or map it to "ignore"`
						: `it is not a channel name of our layout (<side>.<joint>.<motion>, e.g. right.knee.flexion, or <plate>.force.x, e.g. plate1.force.x); rename it or match it to a channel in the mapping step`;
			problems.add({ row: 1, column: h.text, code: 'unknown-column', message: `Column "${h.text}" maps to no channel: ${hint}.` });
			needsMapping = true;
			return;
		}
		// the suffix, if it is one we accept; without a suffix, angles take the file's chosen unit
		const unit = h.unit === undefined ? (channel.kind === 'angle' ? opts.defaultAngleUnit : undefined) : unitOf(channel.kind, h.unit);
		if (!unit && h.unit !== undefined) {
			problems.add({ row: 1, column: h.text, ...unitMessage(h.text, h.unit, channel) });
		} else if (!unit) {
			problems.add({
				row: 1,
				column: h.text,
				code: 'unit-unknown',
				message:
					channel.kind === 'angle'
						? `Column "${h.text}" has no unit; choose degrees or radians for the file, or name the column "${h.name} (deg)" or "${h.name} (rad)".`
						: `Column "${h.text}" has no unit; name it "${h.name}${suffixOf(channel)}" (${channel.kind} columns take ${takes(channel.kind)}), or give the unit in the mapping step.`
			});
		}
		if (unit) targets.push({ index: i, header: h.text, channel, unit, flip: false });
	});
	if (!needsMapping) missingChannels(header, opts, targets, problems, undefined, new Set(header.map((h) => h.name)));
	return problems.hasErrors ? { ok: false, needsMapping } : { ok: true, timeIndex, timeUnit, columns: targets };
}

function missingChannels(
	header: HeaderColumn[],
	opts: ParseOptions,
	targets: PlannedColumn[],
	problems: ProblemList,
	mapping?: ColumnMapping,
	present?: Set<string>
): void {
	// A channel whose column is there but has its own problem (e.g. its unit) is not reported missing too.
	const have = new Set([...targets.map((t) => t.channel.name), ...(present ?? [])]);
	for (const e of opts.expected) {
		if (have.has(e.name)) continue;
		const fromMapping = mapping && Object.entries(mapping.columns).find(([, c]) => c.channel === e.name);
		problems.add({
			row: 1,
			field: e.name,
			code: 'missing-channel',
			message: fromMapping
				? `Channel ${e.name} is missing: the mapping takes it from column "${fromMapping[0]}", which this file does not have.`
				: `${e.need ? e.name : `Channel ${e.name}`} is missing: ${e.need ?? "this session's model needs it"}. Add a column "${e.name}${suffixOf(e)}"${header.length ? ' or match an existing column to it in the mapping step' : ''}.`
		});
	}
}

export function planFromMapping(header: HeaderColumn[], raw: unknown, opts: ParseOptions, problems: ProblemList): Plan {
	const parsed = columnMappingSchema.safeParse(raw);
	if (!parsed.success) {
		for (const issue of parsed.error.issues) {
			problems.add({
				field: ['mapping', ...issue.path].join('.'),
				code: 'mapping-invalid',
				message: `The column mapping is not valid at ${['mapping', ...issue.path].join('.')}: ${issue.message}.`
			});
		}
		return { ok: false };
	}
	const mapping = parsed.data;
	const expected = new Map(opts.expected.map((e) => [e.name, e]));
	const timeIndex = header.findIndex((h) => h.text === mapping.timeColumn);
	if (timeIndex < 0) {
		problems.add({
			row: 1,
			field: 'mapping.timeColumn',
			code: 'mapping-column-missing',
			message: `The mapping takes time from column "${mapping.timeColumn}", which this file does not have (its columns: ${header.map((h) => `"${h.text}"`).join(', ')}).`
		});
	}
	const targets: PlannedColumn[] = [];
	const taken = new Map<string, string>();
	header.forEach((h, i) => {
		if (i === timeIndex) return;
		const c = mapping.columns[h.text];
		if (!c) {
			problems.add({
				row: 1,
				column: h.text,
				code: 'unknown-column',
				message: `Column "${h.text}" maps to no channel: the mapping does not mention it. Match it to a channel or to "ignore".`
			});
			return;
		}
		if (c.channel === null) return;
		const channel = expected.get(c.channel);
		if (!channel) {
			problems.add({
				row: 1,
				column: h.text,
				code: 'mapping-unknown-channel',
				message: `The mapping sends column "${h.text}" to "${c.channel}", which this session's model does not use (expected: ${opts.expected.map((e) => e.name).join(', ')}).`
			});
			return;
		}
		const prev = taken.get(channel.name);
		if (prev !== undefined) {
			problems.add({
				row: 1,
				column: h.text,
				code: 'mapping-duplicate-channel',
				message: `Columns "${prev}" and "${h.text}" are both mapped to ${channel.name}; map one of them to "ignore".`
			});
			return;
		}
		taken.set(channel.name, h.text);
		const fits = unitOf(channel.kind, c.unit) !== undefined;
		if (!fits) {
			problems.add({
				row: 1,
				column: h.text,
				code: 'mapping-unit-mismatch',
				message: `Column "${h.text}" is mapped to ${channel.name}, ${KIND_NAME[channel.kind]} (${UNITS[channel.kind].join(', ')}), but its unit is set to ${c.unit}.`
			});
			return;
		}
		targets.push({ index: i, header: h.text, channel, unit: c.unit, flip: c.flip });
	});
	missingChannels(header, opts, targets, problems, mapping);
	return problems.hasErrors ? { ok: false } : { ok: true, timeIndex, timeUnit: mapping.timeUnit, columns: targets };
}
