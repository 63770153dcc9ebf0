// The participant list check without a database: row numbers as in the file, delimiters, quotes, decimal commas.
import { describe, expect, it } from 'vitest';
import { canonicalText, checkImportText, decodeUtf8, describeProblem, sha256Hex } from '../../../src/lib/server/participants/import';

const problems = (text: string, mayImportPersonal = true) => {
	const r = checkImportText(text, { mayImportPersonal });
	return [...r.fileProblems, ...r.rows.flatMap((x) => x.problems)].map(describeProblem);
};

describe('checkImportText', () => {
	it('numbers rows by the line they start on, skipping blank lines and counting lines inside quoted values', () => {
		const r = checkImportText('\n sex,body_mass_kg,stature_m,notes\nfemale,60,1.6,"a\nb\nc"\n\n,,,\nmale,70,1.7,\n', {
			mayImportPersonal: false
		});
		expect(r.ok).toBe(true);
		// header on line 2; the first participant on line 3 (its note runs to line 5); lines 6 (empty) and 7 (empty values) are skipped
		expect(r.rows.map((x) => x.row)).toEqual([3, 8]);
		expect(r.rows[0].input?.notes).toBe('a\nb\nc');
	});

	it('says which row has too few values and which quote is not closed', () => {
		expect(problems('sex,body_mass_kg,stature_m\nfemale,60\nmale,70,"1.7\n')).toEqual([
			'row 2: 2 values, but the header has 3 columns. Check for a missing value or a comma inside a value without quotes.',
			'row 3: a quoted value is not closed: add the missing " (a quote inside a value is written twice, "").'
		]);
	});

	it('guesses semicolons and tabs, and explains a decimal comma', () => {
		expect(problems('sex;body_mass_kg;stature_m\nfemale;64,2;1,68\n')).toEqual([
			'row 2, column body_mass_kg: write numbers with a decimal point: 64.2, not 64,2.',
			'row 2, column stature_m: write numbers with a decimal point: 1.68, not 1,68.'
		]);
		expect(checkImportText('sex\tbody_mass_kg\tstature_m\nmale\t70\t1.7\n', { mayImportPersonal: false }).delimiter).toBe('\t');
	});

	it('normalises line ends and the byte-order mark before hashing, so a browser round trip keeps the hash', () => {
		const original = '\uFEFFsex,body_mass_kg,stature_m\r\nmale,70,1.7\r\n';
		const afterForm = canonicalText(original).replace(/\n/g, '\r\n');
		expect(sha256Hex(canonicalText(afterForm))).toBe(sha256Hex(canonicalText(original)));
		expect(decodeUtf8(new Uint8Array([0xef, 0xbb, 0xbf, 0x61]))).toBe('a');
		expect(decodeUtf8(new Uint8Array([0x61, 0xe9]))).toBeNull();
	});
});
