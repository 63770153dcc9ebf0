// The plan of a parse, made from the header once: which column is time (and its unit), and which column feeds
// which expected channel, in which unit, with or without a sign flip — from our layout, or from a mapping.
import type { CheckedColumn } from './checks';
import { columnMappingSchema, isTimeName, type ColumnMapping, type HeaderColumn } from './header';
import { isSchemeName } from './layout';
import type { ProblemList } from './problems';
import type { ParseOptions } from './types';
import { unitOf, type TimeUnit } from './units';

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
			const hint = isSchemeName(h.name)
				? `it is one of our channel names, but this session's model does not use it (expected: ${opts.expected.map((e) => e.name).join(', ')}); remove the column or map it to "ignore"`
				: `it is not a channel name of our layout (<side>.<joint>.<motion>, e.g. right.knee.flexion); rename it or match it to a channel in the mapping step`;
			problems.add({ row: 1, column: h.text, code: 'unknown-column', message: `Column "${h.text}" maps to no channel: ${hint}.` });
			needsMapping = true;
			return;
		}
		// the suffix, if it is one we accept; without a suffix, angles take the file's chosen unit
		const unit = h.unit === undefined ? (channel.kind === 'angle' ? opts.defaultAngleUnit : undefined) : unitOf(channel.kind, h.unit);
		if (!unit && h.unit !== undefined) {
			const takes = channel.kind === 'angle' ? '" (deg)" or " (rad)"' : '" (m)" or " (mm)"';
			problems.add({
				row: 1,
				column: h.text,
				code: 'unit-unsupported',
				message: `Unknown unit "${h.unit}" in "${h.text}"; ${channel.kind} columns take ${takes}.`
			});
		} else if (!unit) {
			problems.add({
				row: 1,
				column: h.text,
				code: 'unit-unknown',
				message:
					channel.kind === 'angle'
						? `Column "${h.text}" has no unit; choose degrees or radians for the file, or name the column "${h.name} (deg)" or "${h.name} (rad)".`
						: `Column "${h.text}" has no unit; name it "${h.name} (m)" or "${h.name} (mm)", or give the unit in the mapping step.`
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
				: `Channel ${e.name} is missing: this session's model needs it. Add a column "${e.name}${e.kind === 'angle' ? ' (deg)' : ' (m)'}"${header.length ? ' or match an existing column to it in the mapping step' : ''}.`
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
				message: `Column "${h.text}" is mapped to ${channel.name}, an ${channel.kind === 'angle' ? 'angle (deg or rad)' : 'position (m or mm)'}, but its unit is set to ${c.unit}.`
			});
			return;
		}
		targets.push({ index: i, header: h.text, channel, unit: c.unit, flip: c.flip });
	});
	missingChannels(header, opts, targets, problems, mapping);
	return problems.hasErrors ? { ok: false } : { ok: true, timeIndex, timeUnit: mapping.timeUnit, columns: targets };
}
