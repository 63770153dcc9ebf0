// Stream decoding: bytes (or text) chunk by chunk → UTF-8 text → uniform line ends → rows of cells with their
// line numbers, through papaparse's low-level parser; never the whole file as one string.
import Papa from 'papaparse';

/** The input is not UTF-8 text (binary, UTF-16, invalid bytes, no line break); the message says what to do. */
export class NotText extends Error {}

/** Delimiter of the header line: tab, semicolon or comma, whichever occurs most outside quotes (ties in that order). */
export function detectDelimiter(headerLine: string): '\t' | ';' | ',' {
	const counts = { '\t': 0, ';': 0, ',': 0 };
	let quoted = false;
	for (const ch of headerLine) {
		if (ch === '"') quoted = !quoted;
		else if (!quoted && (ch === '\t' || ch === ';' || ch === ',')) counts[ch]++;
	}
	let best: '\t' | ';' | ',' = ',';
	for (const d of ['\t', ';', ','] as const)
		if (counts[d] > counts[best] || (counts[d] === counts[best] && counts[d] > 0 && best === ',')) best = d;
	return best;
}

const PIECE = 1 << 16;

async function* pieces(input: AsyncIterable<Uint8Array | string> | string | Uint8Array): AsyncGenerator<Uint8Array | string> {
	if (typeof input === 'string' || input instanceof Uint8Array) {
		// Papa's parser would turn one huge piece into one huge array of rows; feed it in slices instead.
		for (let i = 0; i < input.length; i += PIECE)
			yield typeof input === 'string' ? input.slice(i, i + PIECE) : input.subarray(i, i + PIECE);
		return;
	}
	for await (const chunk of input) {
		if (chunk.length <= 4 * PIECE) yield chunk;
		else
			for (let i = 0; i < chunk.length; i += PIECE)
				yield typeof chunk === 'string' ? chunk.slice(i, i + PIECE) : chunk.subarray(i, i + PIECE);
	}
}

/** Decodes UTF-8 incrementally and refuses binary or UTF-16 content. */
async function* texts(input: AsyncIterable<Uint8Array | string> | string | Uint8Array): AsyncGenerator<string> {
	const decoder = new TextDecoder('utf-8', { fatal: true, ignoreBOM: true });
	const head: number[] = [];
	let first = true;
	for await (let piece of pieces(input)) {
		let text: string;
		if (typeof piece === 'string') text = piece;
		else {
			if (head.length < 2) {
				// A UTF-16 byte-order mark must be recognised even when it arrives one byte at a time.
				const before = head.length;
				for (let i = 0; i < piece.length && head.length < 2; i++) head.push(piece[i]);
				if (head.length < 2) continue;
				if ((head[0] === 0xff && head[1] === 0xfe) || (head[0] === 0xfe && head[1] === 0xff)) {
					throw new NotText('The file is UTF-16 text; save it as UTF-8 (with or without BOM) and upload it again.');
				}
				if (before > 0) {
					const joined = new Uint8Array(before + piece.length);
					joined.set(head.slice(0, before));
					joined.set(piece, before);
					piece = joined;
				}
			}
			try {
				text = decoder.decode(piece, { stream: true });
			} catch {
				throw new NotText(
					'The file is not UTF-8 text (it contains bytes that are not valid UTF-8; is it a binary export or a spreadsheet file?). Export the recording as delimited text in UTF-8.'
				);
			}
		}
		if (first && text.length > 0) {
			if (text.charCodeAt(0) === 0xfeff) text = text.slice(1);
			first = false;
		}
		if (text.includes('\0')) {
			throw new NotText(
				'The file contains NUL bytes, so it is binary data or UTF-16 text, not a UTF-8 text file. Export the recording as delimited text in UTF-8.'
			);
		}
		if (text) yield text;
	}
	try {
		const rest = head.length === 1 ? decoder.decode(new Uint8Array(head)) : decoder.decode();
		if (rest) yield rest;
	} catch {
		throw new NotText(
			'The file ends in the middle of a UTF-8 character (is it cut short or binary?). Export the recording again as UTF-8 text.'
		);
	}
}

/**
 * Every line end as "\n": CRLF, a lone CR (old Mac exports, or lines added on another system) and LF each end one
 * line, also in one file together. A CR at the end of a piece waits to see whether the next piece starts with the
 * LF of the same CRLF pair.
 */
async function* unixLines(input: AsyncIterable<string>): AsyncGenerator<string> {
	let afterCR = false;
	for await (let text of input) {
		if (afterCR && text.charCodeAt(0) === 10) text = text.slice(1);
		if (!text) continue;
		afterCR = text.charCodeAt(text.length - 1) === 13;
		yield text.includes('\r') ? text.replace(/\r\n?/g, '\n') : text;
	}
}

export interface Row {
	line: number;
	cells: string[];
	last: boolean;
}

/** Rows with their line numbers, parsed by papaparse chunk by chunk (one batch per chunk); the header line picks the delimiter. */
export async function* rows(
	input: AsyncIterable<Uint8Array | string> | string | Uint8Array,
	onDelimiter: (d: '\t' | ';' | ',') => void
): AsyncGenerator<Row[]> {
	let buffered = '';
	let parser: Papa.Parser | null = null;
	let line = 0;
	let pendingRow: string[] | null = null;
	const emit = (data: string[][], finished: boolean): Row[] => {
		const out: Row[] = [];
		for (const cells of data) {
			if (pendingRow) out.push({ line, cells: pendingRow, last: false });
			line++;
			for (let i = 0; i < cells.length; i++) cells[i] = cells[i].trim();
			pendingRow = cells;
		}
		if (finished && pendingRow) {
			out.push({ line, cells: pendingRow, last: true });
			pendingRow = null;
		}
		return out;
	};
	const start = (finished: boolean): boolean => {
		const nl = buffered.indexOf('\n');
		if (nl < 0 && !finished) {
			if (buffered.length > 1 << 20)
				throw new NotText('The first line is longer than 1 MiB without a line break; this is not a recording file with a header line.');
			return false;
		}
		const headerLine = nl < 0 ? buffered : buffered.slice(0, nl);
		const delimiter = detectDelimiter(headerLine);
		onDelimiter(delimiter);
		parser = new Papa.Parser({ delimiter, newline: '\n', quoteChar: '"' });
		return true;
	};
	const feed = (finished: boolean): string[][] => {
		const res = parser!.parse(buffered, 0, !finished) as { data: string[][]; meta: { cursor: number } };
		buffered = finished ? '' : buffered.slice(res.meta.cursor);
		return res.data;
	};
	for await (const text of unixLines(texts(input))) {
		buffered += text;
		if (!parser && !start(false)) continue;
		const batch = emit(feed(false), false);
		if (batch.length) yield batch;
	}
	if (!parser) {
		if (buffered.trim() === '') return;
		start(true);
	}
	yield emit(feed(true), true);
}
