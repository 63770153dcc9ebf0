// The problem list of one parse (at most MAX_PROBLEMS_PER_CODE per code) and the formatting its messages share.
import type { Problem } from './types';

/** At most this many problems of one code are listed; the rest are counted in one summary line. */
export const MAX_PROBLEMS_PER_CODE = 20;
const TEXT_PREVIEW = 24;

export class ProblemList {
	readonly items: Problem[] = [];
	private counts = new Map<string, number>();
	constructor(private file: string) {}
	add(p: Omit<Problem, 'file' | 'severity'> & { severity?: Problem['severity'] }): void {
		const n = (this.counts.get(p.code) ?? 0) + 1;
		this.counts.set(p.code, n);
		if (n <= MAX_PROBLEMS_PER_CODE) this.items.push({ file: this.file, severity: 'error', ...p });
	}
	get hasErrors(): boolean {
		return this.items.some((p) => p.severity === 'error');
	}
	has(code: string): boolean {
		return this.counts.has(code);
	}
	/** The list with one "and N more" line per code that overflowed. */
	done(): Problem[] {
		const out = [...this.items];
		for (const [code, n] of this.counts) {
			if (n > MAX_PROBLEMS_PER_CODE) {
				const first = this.items.find((p) => p.code === code)!;
				out.push({
					file: this.file,
					code,
					severity: first.severity,
					message: `…and ${n - MAX_PROBLEMS_PER_CODE} more problems of this kind (${code}) not listed.`
				});
			}
		}
		return out;
	}
}

/** A cell's text as quoted in a message, cut after TEXT_PREVIEW characters. */
export const preview = (s: string) => (s.length > TEXT_PREVIEW ? `${s.slice(0, TEXT_PREVIEW)}…` : s);
/** A number in a message: `digits` significant digits, no trailing zeros. */
export const fmt = (x: number, digits = 4) => (Number.isFinite(x) ? String(Number(x.toPrecision(digits))) : String(x));
export const delimiterName = (d: string) => (d === ',' ? 'comma' : d === ';' ? 'semicolon' : 'tab');
