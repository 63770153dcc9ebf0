// `npm run bench:pipeline`: a 10-minute 200 Hz recording of the 26-DOF bilateral tree, stage by stage from file to series stored in PostgreSQL.
import { spawnSync } from 'node:child_process';
import { createReadStream, createWriteStream, mkdtempSync, rmSync, statSync } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { parseRecording } from '../lib/processing/recording';
import { buildSessionModel } from '../lib/processing/session-model';
import { runOptionsSchema, runPipeline } from '../lib/processing/pipeline';
import { modelRecord, seriesRows, type ComputedRun } from '../lib/server/runs/compute';
import { writeResults } from '../lib/server/runs/process';
import { closeDb, db } from '../lib/server/db/index';
import { startScratchCluster } from './lib/postgres';
import { prepareDatabase } from './lib/prepare-db';

const sampleHz = 200;
const frames = Number(process.env.BENCH_FRAMES ?? 120_000);
// Both arms and legs of an 80 kg, 1.80 m man scaled from de Leva (1996): 26 DOF, as bench:dynamics.
const built = buildSessionModel(
	{ sex: 'male', bodyMass: 80, stature: 1.8 },
	{ table: 'de-leva-1996', limbs: ['right.leg', 'left.leg', 'right.arm', 'left.arm'] }
);
const n = built.dofs.length;
if (n !== 26) throw new Error(`benchmark tree has ${n} DOF, expected 26`);

/** Writes the recording in our layout (deg, 6 decimals), streamed, before any timing starts. */
async function writeRecording(path: string): Promise<void> {
	const out = createWriteStream(path);
	out.write(['time (s)', ...built.dofs.map((d) => `${d.name} (deg)`)].join(',') + '\n');
	for (let k0 = 0; k0 < frames; k0 += 2000) {
		let chunk = '';
		for (let k = k0; k < Math.min(frames, k0 + 2000); k++) {
			const t = k / sampleHz;
			chunk += String(Number(t.toFixed(6)));
			for (let i = 0; i < n; i++) {
				// smooth motion inside every DOF's usual range: 15° + 20° sin + 5° sin
				const v = 15 + 20 * Math.sin(2 * Math.PI * (0.3 + 0.05 * i) * t) + 5 * Math.sin(2 * Math.PI * (1.1 + 0.03 * i) * t + i);
				chunk += ',' + v.toFixed(6);
			}
			chunk += '\n';
		}
		if (!out.write(chunk)) await new Promise<void>((r) => out.once('drain', () => r()));
	}
	out.end();
	await new Promise<void>((res, rej) => {
		out.on('finish', res);
		out.on('error', rej);
	});
}

/**
 * The store stage as the worker does it: a temporary PostgreSQL cluster with our schema and the demo data; the
 * series (Float64 little-endian bytes) go into run_series of a new run of a demo trial, in one transaction.
 */
async function openStore(dir: string) {
	const cluster = await startScratchCluster(dir, 'bench');
	await prepareDatabase(cluster.url, { seed: true, log: () => {} });
	const sequelize = db(cluster.url);
	const [[trial]] = (await sequelize.query(`SELECT id, sha256 FROM trials ORDER BY created_at LIMIT 1`)) as [
		{ id: string; sha256: string }[],
		unknown
	];
	const [[run]] = (await sequelize.query(
		`INSERT INTO runs (trial_id, state, attempts, options, raw_sha256, software_version) VALUES (:trial, 'running', 1, '{}', :sha, 'bench') RETURNING id`,
		{ replacements: { trial: trial.id, sha: trial.sha256 } }
	)) as [{ id: string }[], unknown];
	return {
		store: (computed: ComputedRun) => sequelize.transaction((t) => writeResults(run.id, computed, t)),
		close: async () => {
			await closeDb();
			await cluster.stop();
		}
	};
}

const ms = (t: number) => `${t.toFixed(0).padStart(6)} ms`;

async function main() {
	if (process.argv[2] === '--write') return writeRecording(process.argv[3]);
	const dir = mkdtempSync(join(tmpdir(), 'momentry-bench-'));
	const file = join(dir, 'bench-26dof-200hz.csv');
	try {
		// written by a child process, so that its memory does not count in this process's peak
		const child = spawnSync(process.execPath, [...process.execArgv, fileURLToPath(import.meta.url), '--write', file], {
			stdio: 'inherit',
			env: process.env
		});
		if (child.status !== 0) throw new Error(`writing the benchmark recording failed (exit ${child.status})`);
		const size = statSync(file).size;
		console.log(
			`recording: ${frames.toLocaleString('en')} frames × ${n} DOF at ${sampleHz} Hz (${(frames / sampleHz / 60).toFixed(1)} min), ${(size / 2 ** 20).toFixed(1)} MiB CSV; Node ${process.version}`
		);
		const rssBefore = process.resourceUsage().maxRSS;

		// wall time, and this process's CPU time (user + system): on a shared machine the CPU time is the steadier figure
		const stages: [string, number, number][] = [];
		const cpu = () => {
			const u = process.cpuUsage();
			return (u.user + u.system) / 1000;
		};
		let t0 = performance.now(),
			c0 = cpu();
		const parsed = await parseRecording(createReadStream(file, { highWaterMark: 1 << 20 }), {
			fileName: 'bench-26dof-200hz.csv',
			expected: built.expected
		});
		stages.push(['parse + validate', performance.now() - t0, cpu() - c0]);
		const rssParsed = process.resourceUsage().maxRSS;
		if (!parsed.ok) throw new Error(`the benchmark file did not parse: ${JSON.stringify(parsed.problems.slice(0, 3))}`);

		// pipeline stages: wall time from the pipeline's own timings; CPU time by running each stage's share again is not
		// possible inside one call, so the pipeline's CPU time is reported as one figure beside its stages
		t0 = performance.now();
		c0 = cpu();
		const r = runPipeline(built, parsed.recording, { cutoffHz: 6 }, undefined, { reuseInput: true }); // as the worker does
		const pipelineWall = performance.now() - t0,
			pipelineCpu = cpu() - c0;
		const rssPipeline = process.resourceUsage().maxRSS;
		for (const s of ['filter', 'differentiate', 'dynamics', 'summary'])
			stages.push([s === 'dynamics' ? 'inverse dynamics' : s, r.timings[s], NaN]);
		stages.push(['(pipeline, all four stages)', pipelineWall, pipelineCpu]);

		const store = await openStore(dir);
		try {
			t0 = performance.now();
			c0 = cpu();
			const series = seriesRows(r, built);
			const bytes = series.reduce((a, x) => a + x.data.byteLength, 0);
			await store.store({
				series,
				summary: r.summary,
				edgeZone: r.edgeZone,
				model: modelRecord(built, runOptionsSchema.parse({ cutoffHz: 6 })),
				timings: r.timings
			});
			stages.push([
				`store in PostgreSQL (${series.length} series, ${(bytes / 2 ** 20).toFixed(0)} MiB)`,
				performance.now() - t0,
				cpu() - c0
			]);
		} finally {
			await store.close();
		}

		const counted = stages.filter(([name]) => !['filter', 'differentiate', 'inverse dynamics', 'summary'].includes(name));
		const total = counted.reduce((a, [, t]) => a + t, 0),
			totalCpu = counted.reduce((a, [, , c]) => a + c, 0);
		console.log(`${'stage'.padEnd(34)} ${'wall'.padStart(9)} ${'cpu'.padStart(9)}`);
		for (const [name, t, c] of stages) console.log(`${name.padEnd(34)} ${ms(t)} ${Number.isNaN(c) ? ''.padStart(9) : ms(c)}`);
		console.log(`${'total'.padEnd(34)} ${ms(total)} ${ms(totalCpu)}   (target < 5000 ms)`);
		const peak = process.resourceUsage().maxRSS / 1024;
		const mib = (kb: number) => `${(kb / 1024).toFixed(0)} MiB`;
		console.log(
			`peak memory: ${peak.toFixed(0)} MiB resident (maxRSS; target < 400 MiB); peak so far before parsing ${mib(rssBefore)}, after parsing ${mib(rssParsed)}, after the pipeline ${mib(rssPipeline)}`
		);
	} finally {
		rmSync(dir, { recursive: true, force: true });
	}
}

main().catch((e) => {
	console.error(e);
	process.exit(1);
});
