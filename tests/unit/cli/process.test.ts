// `npm run process` as a person runs it: the CLI spawned with tsx on a small file without unit suffixes.
import { execFile } from 'node:child_process';
import fs from 'node:fs';
import os from 'node:os';
import path from 'node:path';
import { afterAll, beforeAll, describe, expect, it } from 'vitest';

const ROOT = path.resolve(import.meta.dirname, '../../..');
let dir: string;

function cli(args: string[]): Promise<{ code: number; stdout: string; stderr: string }> {
	return new Promise((resolve) => {
		execFile(
			process.execPath,
			['--import', 'tsx', path.join(ROOT, 'src/cli/process.ts'), ...args],
			{ cwd: ROOT, timeout: 60_000 },
			(err, stdout, stderr) => resolve({ code: err ? ((err as { code?: number }).code ?? 1) : 0, stdout, stderr })
		);
	});
}

beforeAll(() => {
	dir = fs.mkdtempSync(path.join(os.tmpdir(), 'momentry-cli-'));
	fs.writeFileSync(path.join(dir, 'p.json'), JSON.stringify({ sex: 'female', bodyMass: 64, stature: 1.68 }));
	// a right-leg trial whose angle columns carry no unit suffix (degrees), 100 Hz, 1 s
	const lines = [
		'time,right.hip.flexion,right.hip.adduction,right.hip.internalRotation,right.knee.flexion,right.ankle.dorsiflexion,right.ankle.inversion'
	];
	for (let k = 0; k <= 100; k++) {
		const t = k / 100;
		lines.push([t.toFixed(2), '10', '0', '0', (45 + 30 * Math.sin(Math.PI * t)).toFixed(3), '0', '0'].join(','));
	}
	fs.writeFileSync(path.join(dir, 'leg.csv'), lines.join('\n') + '\n');
});
afterAll(() => fs.rmSync(dir, { recursive: true, force: true }));

/** The leg trial of the participant in p.json, written to `out`, with `more` options. */
const processLeg = (out: string, ...more: string[]) =>
	cli(['--participant', path.join(dir, 'p.json'), '--angles', path.join(dir, 'leg.csv'), '--out', out, ...more]);

describe('npm run process --angle-unit', () => {
	it('--help lists the option', async () => {
		const r = await cli(['--help']);
		expect(r.code).toBe(0);
		expect(r.stdout).toMatch(/--angle-unit deg\|rad/);
	}, 90_000);

	it('without the option: refused with the unit message and how to choose it on the command line, nothing written', async () => {
		const out = path.join(dir, 'none.csv');
		const r = await processLeg(out);
		expect(r.code).toBe(1);
		expect(r.stderr).toMatch(
			/leg\.csv:1 \[right\.knee\.flexion\]: error: Column "right\.knee\.flexion" has no unit; choose degrees or radians/
		);
		expect(r.stderr).toMatch(/--angle-unit deg or --angle-unit rad/);
		expect(fs.existsSync(out)).toBe(false);
	}, 90_000);

	it('with --angle-unit deg: moments printed and written; with rad the same cells are radians (45 rad is past the hard limit)', async () => {
		const out = path.join(dir, 'deg.csv');
		const r = await processLeg(out, '--angle-unit', 'deg');
		expect(r.code, r.stderr).toBe(0);
		expect(r.stdout).toMatch(/right\.knee\.flexion\s+moment\s+-?\d/);
		const [head, first] = fs.readFileSync(out, 'utf8').split('\n');
		const cols = head.split(',');
		const knee = cols.indexOf('right.knee.flexion.angle (deg)');
		expect(knee).toBeGreaterThan(0);
		// degrees come back as they were typed: 45° at the first sample, within 0.5° after the zero-lag filter
		expect(Number(first.split(',')[knee])).toBeCloseTo(45, 0);
		const moment = cols.indexOf('right.knee.flexion.moment (N·m)');
		expect(Number.isFinite(Number(first.split(',')[moment]))).toBe(true);
		const rad = await processLeg(path.join(dir, 'rad.csv'), '--angle-unit', 'rad');
		expect(rad.code).toBe(1);
		expect(rad.stderr).toMatch(
			/leg\.csv:2 \[right\.knee\.flexion\]: error: Line 2, column 5 \("right\.knee\.flexion"\): "45\.000" \(rad\) is 2578°, beyond the hard limit of ±720°.*\(impossible-value\)/
		);
		const bad = await processLeg(out, '--angle-unit', 'grad');
		expect(bad.code).toBe(1);
		expect(bad.stderr).toMatch(/--angle-unit must be deg or rad \(got "grad"\)/);
	}, 90_000);
});
