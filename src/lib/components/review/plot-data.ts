// Labels, units and exports of the review plots (no server imports; used by the components and the compare page).
import { dofWords } from '../plots/curves';

export { dofWords };

export interface PlotLine {
	id: string;
	label: string;
	/** Index into the palette (colour and dash). */
	style: number;
	/** Full-resolution samples (time in s, or % of cycle). */
	t: number[];
	v: (number | null)[];
	/** Indices into t / v to draw at the full view (from the server's reduction); absent: reduce in the browser. */
	drawn?: number[];
	/** ± this (e.g. one SD) drawn as a band around the line. */
	band?: (number | null)[];
}

export interface PlotPanel {
	key: string;
	title: string;
	/** The axis label: DOF, quantity, unit and sign rule. */
	axis: string;
	unit: string;
	lines: PlotLine[];
}

/** A shaded edge-zone band on the x axis (s): where a run's results are not reliable; `title` says how long and why. */
export interface PlotZone {
	from: number;
	to: number;
	title: string;
}

const QUANTITY_WORD: Record<string, string> = {
	moment: 'moment',
	moment_per_kg: 'moment',
	angle: 'angle',
	power: 'power',
	velocity: 'velocity'
};

/** Short positive sense: "flexion: shank backward" → "flexion". */
export const positiveWord = (positive: string | null) => (positive ? positive.split(':')[0].trim() : null);

/** Angles are shown in ° (and °/s); everything else in its stored unit. */
export function displayUnit(unit: string): { unit: string; factor: number } {
	if (unit === 'rad') return { unit: '°', factor: 180 / Math.PI };
	if (unit === 'rad/s') return { unit: '°/s', factor: 180 / Math.PI };
	return { unit, factor: 1 };
}

/** e.g. "right knee flexion moment (N·m), + = flexion". Power: + = generation (moment and motion in the same sense). */
export function axisLabel(name: string, quantity: string, unit: string, positive: string | null): string {
	const word = QUANTITY_WORD[quantity] ?? quantity;
	const sign =
		quantity === 'power' ? 'generation (moment and motion in the same sense)' : (positiveWord(positive) ?? 'positive sense not recorded');
	return `${dofWords(name)} ${word} (${unit}), + = ${sign}`;
}

/** Number with 4 significant digits for read-outs and ticks. */
export function fmt(x: number | null | undefined): string {
	if (x === null || x === undefined || !Number.isFinite(x)) return '–';
	const a = Math.abs(x);
	if (a !== 0 && (a < 1e-3 || a >= 1e5)) return x.toExponential(3);
	return Number(x.toPrecision(4)).toString();
}

/**
 * CSV of panels: one time column (the union of every line's sample times) and one column per panel × line, with
 * the unit in the header; a cell is empty where that line has no sample at that time (nothing is interpolated).
 */
export function panelsCsv(panels: PlotPanel[], timeHeader = 'time (s)'): string {
	const times = [...new Set(panels.flatMap((p) => p.lines.flatMap((l) => l.t)))].sort((a, b) => a - b);
	const row = new Map(times.map((t, i) => [t, i]));
	const cols: { head: string; cells: string[] }[] = [];
	for (const p of panels)
		for (const l of p.lines) {
			const cells = new Array<string>(times.length).fill('');
			l.t.forEach((t, i) => {
				const v = l.v[i];
				if (v !== null && Number.isFinite(v)) cells[row.get(t)!] = String(v);
			});
			cols.push({ head: `${p.title} — ${l.label} (${p.unit})`, cells });
		}
	const q = (s: string) => (/[",\n]/.test(s) ? `"${s.replace(/"/g, '""')}"` : s);
	const lines = [[timeHeader, ...cols.map((c) => c.head)].map(q).join(',')];
	times.forEach((t, i) => lines.push([String(t), ...cols.map((c) => c.cells[i])].join(',')));
	return lines.join('\n') + '\n';
}

/** Offers text or a blob as a download. */
export function download(name: string, content: Blob | string, type = 'text/plain'): void {
	const blob = typeof content === 'string' ? new Blob([content], { type }) : content;
	const a = document.createElement('a');
	a.href = URL.createObjectURL(blob);
	a.download = name;
	document.body.appendChild(a);
	a.click();
	a.remove();
	setTimeout(() => URL.revokeObjectURL(a.href), 1000);
}

/** All <svg> panels inside `root` stacked into one standalone SVG document (white background). */
export function combinedSvg(root: HTMLElement): { text: string; width: number; height: number } {
	const svgs = [...root.querySelectorAll<SVGSVGElement>('svg[data-export]')];
	const width = Math.max(...svgs.map((s) => s.viewBox.baseVal.width), 1);
	let y = 0;
	const parts: string[] = [];
	for (const s of svgs) {
		const h = s.viewBox.baseVal.height;
		const clone = s.cloneNode(true) as SVGSVGElement;
		clone.querySelectorAll('[data-no-export]').forEach((n) => n.remove());
		parts.push(`<g transform="translate(0 ${y})">${clone.innerHTML}</g>`);
		y += h + 8;
	}
	const text = `<?xml version="1.0" encoding="UTF-8"?>\n<svg xmlns="http://www.w3.org/2000/svg" width="${width}" height="${y}" viewBox="0 0 ${width} ${y}" font-family="sans-serif" font-size="10"><rect width="100%" height="100%" fill="#ffffff"/>${parts.join('')}</svg>`;
	return { text, width, height: y };
}

/** PNG of the combined SVG, drawn on a canvas at `scale`. */
export async function svgToPng(svg: { text: string; width: number; height: number }, scale = 2): Promise<Blob> {
	const url = URL.createObjectURL(new Blob([svg.text], { type: 'image/svg+xml' }));
	try {
		const img = new Image();
		await new Promise<void>((res, rej) => {
			img.onload = () => res();
			img.onerror = () => rej(new Error('The plot could not be drawn as an image.'));
			img.src = url;
		});
		const canvas = document.createElement('canvas');
		canvas.width = Math.ceil(svg.width * scale);
		canvas.height = Math.ceil(svg.height * scale);
		const ctx = canvas.getContext('2d')!;
		ctx.scale(scale, scale);
		ctx.drawImage(img, 0, 0);
		return await new Promise<Blob>((res, rej) => canvas.toBlob((b) => (b ? res(b) : rej(new Error('PNG export failed.'))), 'image/png'));
	} finally {
		URL.revokeObjectURL(url);
	}
}
