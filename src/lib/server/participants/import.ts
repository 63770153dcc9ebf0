// CSV import of a study's participant list: a dry run that checks every row with the create form's rules and shows
// the code each row would get, then the import itself in one transaction (every row or none).
import { createHash } from 'node:crypto';
import Papa from 'papaparse';
import { UniqueConstraintError } from 'sequelize';
import { db } from '../db/index';
import { Participant, ParticipantPersonal, Study } from '../db/models';
import { may, studyFor, type Actor } from '../access/guard';
import type { RequestContext } from '../access/context';
import { record } from '../audit/record';
import { FormProblem } from '../errors';
import { formatCode, participantSchema, personalFieldsOf, personalRowOf, prefixOf, researchRowOf, type ParticipantInput } from './records';
import type { ImportView } from '../../types/participants';
export type { ImportView };

/**
 * Largest file accepted. The Node adapter refuses request bodies over BODY_SIZE_LIMIT (512 KB unless set) before
 * any of our code runs, so the limit stays below it to keep our own clear message; 2,000 rows fit comfortably.
 */
export const IMPORT_LIMIT_BYTES = 400 * 1024;
export const IMPORT_MAX_ROWS = 2000;
/** Problems listed one by one; the rest are counted (every row still shows its own). */
export const LISTED_PROBLEMS = 300;
/** Rows per multi-row insert during an import. */
export const IMPORT_CHUNK = 100;

export interface ImportColumn {
	name: string;
	field: keyof ParticipantInput;
	required: boolean;
	personal: boolean;
	meaning: string;
}

/** Our own column names (matched case-insensitively); `personal` columns need 'participant.personal.edit'. */
export const IMPORT_COLUMNS: readonly ImportColumn[] = [
	{ name: 'sex', field: 'sex', required: true, personal: false, meaning: 'female, male or not reported' },
	{ name: 'birth_year', field: 'birthYear', required: false, personal: false, meaning: 'four digits, e.g. 1987; empty when not recorded' },
	{ name: 'body_mass_kg', field: 'bodyMassKg', required: true, personal: false, meaning: 'kilograms, 20–300, with a decimal point (64.2)' },
	{ name: 'stature_m', field: 'statureM', required: true, personal: false, meaning: 'metres, 0.8–2.5, with a decimal point (1.68)' },
	{ name: 'dominant_side', field: 'dominantSide', required: false, personal: false, meaning: 'left or right; empty when not recorded' },
	{
		name: 'notes',
		field: 'notes',
		required: false,
		personal: false,
		meaning: 'research notes, up to 2,000 characters; no names or contact details'
	},
	{ name: 'full_name', field: 'fullName', required: false, personal: true, meaning: 'personal data' },
	{ name: 'email', field: 'email', required: false, personal: true, meaning: 'personal data; needed later for e-mailed consent' },
	{ name: 'phone', field: 'phone', required: false, personal: true, meaning: 'personal data; digits, spaces and + ( ) - only' }
];
const BY_NAME = new Map(IMPORT_COLUMNS.map((c) => [c.name, c]));
const BY_FIELD = new Map(IMPORT_COLUMNS.map((c) => [c.field, c]));
const DELIMITER_NAMES: Record<string, string> = { ',': 'comma', ';': 'semicolon', '\t': 'tab' };

export interface ImportProblem {
	/** Line in the file where the row starts (the header is row 1). */
	row?: number;
	/** Column name as written in the file's header. */
	column?: string;
	message: string;
}

/** "row 4, column body_mass_kg: …" — the one wording used on the page, in tests and in the README. */
export function describeProblem(p: ImportProblem): string {
	const where = [p.row !== undefined ? `row ${p.row}` : '', p.column !== undefined ? `column ${p.column}` : ''].filter(Boolean).join(', ');
	return where ? `${where}: ${p.message}` : p.message;
}

export interface CheckedRow {
	row: number;
	/** Trimmed values by our column name, as the file has them. */
	values: Record<string, string>;
	/** Present when the row passes every rule. */
	input?: ParticipantInput;
	problems: ImportProblem[];
}

export interface CheckResult {
	ok: boolean;
	/** Problems with the file as a whole (encoding, header, row count); rows are not checked then. */
	fileProblems: ImportProblem[];
	rows: CheckedRow[];
	/** Our column names in the file's order. */
	columns: string[];
	delimiter: string;
	personal: boolean;
}

/** The text the checks and the hash work on: no byte-order mark, LF line ends (browsers turn LF into CRLF in form posts). */
export function canonicalText(text: string): string {
	return text.replace(/^\uFEFF/, '').replace(/\r\n?/g, '\n');
}

export const sha256Hex = (text: string) => createHash('sha256').update(text, 'utf8').digest('hex');

/** UTF-8 bytes to text; null when the bytes are not UTF-8. */
export function decodeUtf8(bytes: Uint8Array): string | null {
	try {
		return new TextDecoder('utf-8', { fatal: true, ignoreBOM: false }).decode(bytes);
	} catch {
		return null;
	}
}

const columnList = IMPORT_COLUMNS.map((c) => c.name).join(', ');
const fail = (problems: ImportProblem[], columns: string[] = [], delimiter = ','): CheckResult => ({
	ok: false,
	fileProblems: problems,
	rows: [],
	columns,
	delimiter,
	personal: false
});

/** Checks a participant list without touching the database: the same rules as the create form, row by row. */
export function checkImportText(raw: string, opts: { mayImportPersonal: boolean }): CheckResult {
	const text = canonicalText(raw);
	if (text.trim() === '') {
		return fail([
			{
				message: `The file is empty. It needs a header row naming the columns (at least sex, body_mass_kg, stature_m) and one row per participant.`
			}
		]);
	}
	if (text.includes('\u0000'))
		return fail([
			{ message: 'The file holds binary data, not text: save the list as CSV (comma, semicolon or tab separated) and try again.' }
		]);

	// papaparse reports where each record ends; the line a record starts on is counted from there (a quoted value may span lines)
	const records: { row: number; cells: string[]; errors: Papa.ParseError[] }[] = [];
	let start = 0;
	let line = 1;
	let delimiter = ',';
	Papa.parse<string[]>(text, {
		delimitersToGuess: [',', ';', '\t'],
		skipEmptyLines: false,
		step: (r) => {
			delimiter = r.meta.delimiter;
			const end = r.meta.cursor;
			const cells = r.data.map((c) => c.trim());
			if (cells.some((c) => c !== '')) records.push({ row: line, cells, errors: r.errors });
			for (let i = start; i < end; i++) if (text.charCodeAt(i) === 10) line++;
			start = end;
		}
	});

	const header = records.shift();
	if (!header) return fail([{ message: 'The file is empty.' }]);
	const hr = header.row;
	const names = header.cells.map((c) => c.toLowerCase());
	const problems: ImportProblem[] = [];
	if (header.errors.length)
		problems.push({ row: hr, message: 'the header row has a quote that is not closed; column names need no quotes.' });
	const seen = new Map<string, number>();
	names.forEach((name, i) => {
		const nth = `column ${i + 1}`;
		if (name === '') {
			problems.push({ row: hr, message: `${nth} has no name. Name every column (${columnList}) or remove the empty one.` });
			return;
		}
		const col = BY_NAME.get(name);
		if (!col) {
			problems.push({
				row: hr,
				column: header.cells[i],
				message: `“${header.cells[i]}” is not one of Momentry's columns. Use only ${columnList}.`
			});
		} else if (col.personal && !opts.mayImportPersonal) {
			problems.push({
				row: hr,
				column: header.cells[i],
				message: `${col.name} is personal data, which your role may not import. Remove the ${col.name} column (and any other of full_name, email, phone) and check the file again.`
			});
		}
		const first = seen.get(name);
		if (first !== undefined)
			problems.push({
				row: hr,
				column: header.cells[i],
				message: `columns ${first + 1} and ${i + 1} are both “${name}”. Keep one of them.`
			});
		else seen.set(name, i);
	});
	for (const col of IMPORT_COLUMNS) {
		if (col.required && !seen.has(col.name))
			problems.push({ row: hr, message: `the header has no column ${col.name}, which is required (${col.meaning}).` });
	}
	if (problems.length) return fail(problems, names, delimiter);
	if (records.length === 0) {
		return fail(
			[{ message: 'The file has a header row but no participant rows. Add one row per participant below the header.' }],
			names,
			delimiter
		);
	}
	if (records.length > IMPORT_MAX_ROWS) {
		return fail(
			[
				{
					message: `The file has ${records.length.toLocaleString('en')} participant rows; import at most ${IMPORT_MAX_ROWS.toLocaleString('en')} at a time. Split the file and import the parts one after another.`
				}
			],
			names,
			delimiter
		);
	}

	const rows: CheckedRow[] = records.map((rec) => {
		const values = Object.fromEntries(names.map((n, i) => [n, rec.cells[i] ?? '']));
		const rowProblems: ImportProblem[] = [];
		for (const e of rec.errors) {
			rowProblems.push({
				row: rec.row,
				message:
					e.code === 'MissingQuotes'
						? 'a quoted value is not closed: add the missing " (a quote inside a value is written twice, "").'
						: `the row cannot be read (${e.message}); a quote inside a value is written twice, "".`
			});
		}
		if (rec.cells.length !== names.length) {
			rowProblems.push({
				row: rec.row,
				message: `${rec.cells.length} ${rec.cells.length === 1 ? 'value' : 'values'}, but the header has ${names.length} columns. Check for a missing value or a ${DELIMITER_NAMES[delimiter] ?? delimiter} inside a value without quotes.`
			});
		}
		if (rowProblems.length) return { row: rec.row, values, problems: rowProblems };
		const input = Object.fromEntries(IMPORT_COLUMNS.map((c) => [c.field, values[c.name] ?? '']));
		const r = participantSchema.safeParse(input);
		if (r.success) return { row: rec.row, values, input: r.data, problems: [] };
		const byField = new Set<string>();
		for (const issue of r.error.issues) {
			const field = String(issue.path[0] ?? '');
			if (byField.has(field)) continue;
			byField.add(field);
			const col = BY_FIELD.get(field as keyof ParticipantInput);
			const v = col ? (values[col.name] ?? '') : '';
			// spreadsheets set to a decimal comma write 64,2; say so instead of "not a number"
			const message =
				(field === 'bodyMassKg' || field === 'statureM') && /^\d+,\d+$/.test(v)
					? `write numbers with a decimal point: ${v.replace(',', '.')}, not ${v}.`
					: issue.message;
			rowProblems.push({ row: rec.row, column: col ? (header.cells[names.indexOf(col.name)] ?? col.name) : undefined, message });
		}
		return { row: rec.row, values, problems: rowProblems };
	});
	return {
		ok: rows.every((r) => r.problems.length === 0),
		fileProblems: [],
		rows,
		columns: names,
		delimiter,
		personal: names.some((n) => BY_NAME.get(n)?.personal)
	};
}

function viewOf(
	check: CheckResult,
	meta: { fileName: string; sizeBytes: number; sha256: string; content: string },
	study: Study
): ImportView {
	const prefix = prefixOf(study);
	const first = study.nextParticipantNumber;
	const all = [...check.fileProblems, ...check.rows.flatMap((r) => r.problems)];
	return {
		fileName: meta.fileName,
		sizeBytes: meta.sizeBytes,
		sha256: meta.sha256,
		delimiter: DELIMITER_NAMES[check.delimiter] ?? check.delimiter,
		columns: check.columns,
		rows: check.rows.map((r, i) => ({
			row: r.row,
			code: formatCode(prefix, first + i),
			values: r.values,
			problems: r.problems.map(describeProblem)
		})),
		problems: all.slice(0, LISTED_PROBLEMS).map(describeProblem),
		problemCount: all.length,
		ok: check.ok,
		firstNumber: first,
		content: check.ok ? meta.content : undefined
	};
}

/** The import page: who may bring which columns, and the code the next participant gets. */
export async function importPage(actor: Actor | null, ctx: RequestContext, rawId: string) {
	const { actor: a, study } = await studyFor(actor, ctx, 'participant.import', rawId);
	return {
		study: { id: study.id, code: study.code, title: study.title },
		columns: IMPORT_COLUMNS.map(({ name, required, personal, meaning }) => ({ name, required, personal, meaning })),
		mayImportPersonal: may(a, 'participant.personal.edit', study.id),
		nextCode: formatCode(prefixOf(study), study.nextParticipantNumber),
		limitBytes: IMPORT_LIMIT_BYTES,
		maxRows: IMPORT_MAX_ROWS
	};
}

/** A refused check or import: the message for the file as a whole and/or the checked view with its problems. */
export class ImportRefused extends FormProblem {
	constructor(
		kind: 'invalid' | 'conflict' | 'too-large',
		readonly view?: ImportView,
		message?: string
	) {
		super(message ? { form: message } : {}, kind);
		this.name = 'ImportRefused';
	}
}

const kb = (n: number) => `${Math.ceil(n / 1024).toLocaleString('en')} KB`;

/** Step 1, the dry run: reads the uploaded file and checks it; nothing is written. */
export async function checkImportUpload(
	actor: Actor | null,
	ctx: RequestContext,
	rawId: string,
	file: FormDataEntryValue | null
): Promise<ImportView> {
	const { actor: a, study } = await studyFor(actor, ctx, 'participant.import', rawId);
	if (!(file instanceof File) || (file.size === 0 && file.name === ''))
		throw new ImportRefused('invalid', undefined, 'Choose a CSV file first.');
	if (file.size > IMPORT_LIMIT_BYTES) {
		throw new ImportRefused(
			'too-large',
			undefined,
			`${file.name} is ${kb(file.size)}; the limit is ${kb(IMPORT_LIMIT_BYTES)} (about ${IMPORT_MAX_ROWS.toLocaleString('en')} rows). Split the file and import the parts one after another.`
		);
	}
	const decoded = decodeUtf8(new Uint8Array(await file.arrayBuffer()));
	if (decoded === null)
		throw new ImportRefused(
			'invalid',
			undefined,
			`${file.name} is not UTF-8 text. Save it again as “CSV UTF-8” (or plain UTF-8 text) and check it again.`
		);
	const content = canonicalText(decoded);
	const check = checkImportText(content, { mayImportPersonal: may(a, 'participant.personal.edit', study.id) });
	const view = viewOf(check, { fileName: file.name, sizeBytes: file.size, sha256: sha256Hex(content), content }, study);
	if (!check.ok) throw new ImportRefused('invalid', view);
	return view;
}

/** What the import step gets back from the page: the checked file's text, its hash, name and first code number. */
export interface CheckedFile {
	content: string;
	sha256: string;
	fileName: string;
	firstNumber: number;
}

class CodesMoved extends Error {}

/**
 * Step 2: imports the file that was checked (sent back as text with its SHA-256), checked again here. Codes, personal
 * rows and audit entries are written in one transaction; any failure leaves the study as it was.
 */
export async function runImport(
	actor: Actor | null,
	ctx: RequestContext,
	rawId: string,
	checked: CheckedFile
): Promise<{ count: number; firstCode: string; lastCode: string }> {
	const { actor: a, study } = await studyFor(actor, ctx, 'participant.import', rawId);
	const content = canonicalText(checked.content);
	const { sha256, firstNumber } = checked;
	const fileName = checked.fileName.slice(0, 200) || 'participants.csv';
	if (content.trim() === '' || !/^[0-9a-f]{64}$/.test(sha256))
		throw new ImportRefused('invalid', undefined, 'There is no checked file to import. Choose the file and check it first.');
	if (sha256Hex(content) !== sha256)
		throw new ImportRefused('invalid', undefined, 'The checked file changed on its way back. Choose the file and check it again.');
	if (Buffer.byteLength(content, 'utf8') > IMPORT_LIMIT_BYTES)
		throw new ImportRefused(
			'too-large',
			undefined,
			`The file is over ${kb(IMPORT_LIMIT_BYTES)}. Split it and import the parts one after another.`
		);
	const check = checkImportText(content, { mayImportPersonal: may(a, 'participant.personal.edit', study.id) });
	const meta = { fileName, sizeBytes: Buffer.byteLength(content, 'utf8'), sha256, content };
	if (!check.ok) throw new ImportRefused('invalid', viewOf(check, meta, study));
	const ip = ctx.ipAddress;
	try {
		return await db().transaction(async (transaction) => {
			// the same row lock as adding one participant: imports and additions take turns, codes stay consecutive
			const locked = (await Study.findByPk(study.id, { transaction, lock: transaction.LOCK.UPDATE }))!;
			if (locked.nextParticipantNumber !== firstNumber) throw new CodesMoved();
			const prefix = prefixOf(locked);
			let n = locked.nextParticipantNumber;
			const codes: string[] = [];
			// rows go in as multi-row inserts of IMPORT_CHUNK rows; an error in any chunk rolls back the earlier ones too
			for (let at = 0; at < check.rows.length; at += IMPORT_CHUNK) {
				const chunk = check.rows
					.slice(at, at + IMPORT_CHUNK)
					.map((row) => ({ row: row.row, input: row.input!, code: formatCode(prefix, n++) }));
				codes.push(...chunk.map((c) => c.code));
				const made = await Participant.bulkCreate(
					chunk.map(({ input, code }) => researchRowOf(study.id, code, input)),
					{ transaction }
				);
				await ParticipantPersonal.bulkCreate(
					chunk.map(({ input }, i) => personalRowOf(made[i].id, input)),
					{ transaction }
				);
				for (const [i, { row, input, code }] of chunk.entries()) {
					await record(
						{
							action: 'participant.created',
							actorUserId: a.id,
							actorLabel: a.email,
							studyId: study.id,
							recordType: 'participant',
							recordId: made[i].id,
							ipAddress: ip,
							// which personal fields were entered, never their values
							details: { code, via: 'import', row, sha256, personalFields: personalFieldsOf(input) }
						},
						transaction
					);
				}
			}
			await locked.update({ nextParticipantNumber: n }, { transaction });
			await record(
				{
					action: 'participants.imported',
					actorUserId: a.id,
					actorLabel: a.email,
					studyId: study.id,
					recordType: 'study',
					recordId: study.id,
					ipAddress: ip,
					details: { count: codes.length, firstCode: codes[0], lastCode: codes.at(-1), sha256, fileName, columns: check.columns }
				},
				transaction
			);
			return { count: codes.length, firstCode: codes[0], lastCode: codes.at(-1)! };
		});
	} catch (err) {
		if (err instanceof CodesMoved) {
			const fresh = (await Study.findByPk(study.id))!;
			const view = viewOf(check, meta, fresh);
			view.notice = `Nothing was imported: participants were added since you checked the file, so the codes have moved on. The codes below are the ones the rows get now; import again if they are right.`;
			throw new ImportRefused('conflict', view);
		}
		if (err instanceof UniqueConstraintError) {
			const taken = err.errors.find((e) => e.path === 'code')?.value ?? err.errors[0]?.value;
			const reason = `code ${taken ?? '(unknown)'} is already in use`;
			await record({
				action: 'participants.import.failed',
				actorUserId: a.id,
				actorLabel: a.email,
				outcome: 'failed',
				studyId: study.id,
				recordType: 'study',
				recordId: study.id,
				ipAddress: ip,
				details: { sha256, fileName, reason }
			});
			const view = viewOf(check, meta, study);
			view.notice = `Nothing was imported: the database refused the import because ${reason} (the study's code counter is behind the codes that exist). No participant, code or personal data was saved. Ask a lab administrator to check the study's code counter.`;
			view.content = undefined;
			view.ok = false;
			throw new ImportRefused('conflict', view);
		}
		throw err;
	}
}
