// `npm run bench:gait`: a 2-minute walking trial (200 Hz angles, 1000 Hz forces from two plates, both legs on a moving
// pelvis) from files to results stored in PostgreSQL, with the CPU time of Node and of the database backend.
import { spawnSync } from 'node:child_process';
import { readFileSync, rmSync, statSync, mkdtempSync, writeFileSync, createReadStream } from 'node:fs';
import { fileURLToPath } from 'node:url';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { QueryTypes } from 'sequelize';
import { forceChannelsOf, pairForceRecording, parseRecording } from '../lib/processing/recording';
import { buildSessionModel, sessionSetupSchema } from '../lib/processing/session-model';
import { runOptionsSchema } from '../lib/processing/pipeline';
import { DEFAULT_CONTACT_THRESHOLD_N, forcePlateSchema, labToPlate, plateContains, type ForcePlate } from '../lib/processing/forces';
import { forcesCsv, simulateWalkingTrial } from '../lib/processing/simulate-walking';
import { recordingCsv } from '../lib/processing/simulate-recording';
import { computeRun } from '../lib/server/runs/compute';
import { writeResults } from '../lib/server/runs/process';
import { closeDb, db } from '../lib/server/db/index';
import { startScratchCluster } from './lib/postgres';
import { prepareDatabase } from './lib/prepare-db';

const ANGLE_HZ = 200;
const RATIO = 5;
const SECONDS = Number(process.env.BENCH_SECONDS ?? 120);
const body = { sex: 'male' as const, bodyMass: 75, stature: 1.78 };
// one gait cycle of 1.1 s (220 angle samples, 1100 force samples), 1.25 m/s, stance 60 % of the cycle
const walk = { speedMS: 1.25, cycleS: 1.1, stanceShare: 0.6 };

/**
 * Two plates side by side across the walking line, each under one foot, long enough for a whole stance seen from the
 * pelvis (a split-belt treadmill's layout: X −0.6…0.8 m; right plate Z 0…0.35 m, left plate Z −0.35…0 m).
 */
const plates: ForcePlate[] = [
	{ name: 'plate1', z0: 0, z1: 0.35, output: 'forces-moments' as const },
	{ name: 'plate2', z0: -0.35, z1: 0, output: 'forces-cop' as const }
].map(({ name, z0, z1, output }) =>
	forcePlateSchema.parse({
		name,
		corners: [
			[-0.6, 0, z0],
			[0.8, 0, z0],
			[0.8, 0, z1],
			[-0.6, 0, z1]
		],
		axes: [
			[1, 0, 0],
			[0, 0, -1],
			[0, 1, 0]
		],
		originDepthM: 0.04,
		output
	})
);

/**
 * Writes the trial before any timing starts. One cycle of a simulated walk (simulateWalkingTrial; from the right foot's
 * second strike, with that stance and both left stances it overlaps loaded) is seen from a frame moving with the walking
 * speed (pelvis X and CoP X less v·t: a frame in uniform motion changes no force or moment) and repeated for the trial's
 * length, so every stance lands on its foot's plate.
 */
function writeTrial(dir: string): void {
	const T = walk.cycleS;
	const sim = simulateWalkingTrial({
		name: 'bench-walk',
		body,
		...walk,
		duration: 0.3 + 2 * T + 0.1,
		angleHz: ANGLE_HZ,
		forceRatio: RATIO,
		steps: [
			{ foot: 'right', step: 1 },
			{ foot: 'left', step: 0 },
			{ foot: 'left', step: 1 }
		]
	});
	const a0 = Math.round((0.3 + T) * ANGLE_HZ),
		na = Math.round(T * ANGLE_HZ);
	const f0 = a0 * RATIO,
		nf = na * RATIO;
	const frames = SECONDS * ANGLE_HZ + 1,
		forceFrames = SECONDS * ANGLE_HZ * RATIO + 1;
	const { built } = sim.sim;
	const n = built.dofs.length;
	const px = built.dofs.findIndex((d) => d.name === 'pelvis.px');
	const q = new Float64Array(frames * n);
	const time = Float64Array.from({ length: frames }, (_, j) => j / ANGLE_HZ);
	for (let j = 0; j < frames; j++) {
		const k = a0 + (j % na);
		for (let i = 0; i < n; i++) q[j * n + i] = sim.sim.q[k * n + i];
		q[j * n + px] -= walk.speedMS * sim.sim.time[k];
	}
	const forceTime = Float64Array.from({ length: forceFrames }, (_, m) => m / (ANGLE_HZ * RATIO));
	const feet = [[sim.lab[0]], [sim.lab[1], sim.lab[2]]];
	const signals = plates.map((plate, p) => {
		const grf = new Float64Array(3 * forceFrames),
			cop = new Float64Array(3 * forceFrames).fill(NaN),
			freeMoment = new Float64Array(3 * forceFrames);
		for (let m = 0; m < forceFrames; m++) {
			const k = f0 + (m % nf);
			const src = feet[p].find((l) => !Number.isNaN(l.cop[3 * k]));
			if (!src) continue;
			for (let c = 0; c < 3; c++) {
				grf[3 * m + c] = src.grf[3 * k + c];
				cop[3 * m + c] = src.cop[3 * k + c];
				freeMoment[3 * m + c] = src.freeMoment[3 * k + c];
			}
			cop[3 * m] -= walk.speedMS * sim.forceTime[k];
			if (!plateContains(plate, [cop[3 * m], cop[3 * m + 1], cop[3 * m + 2]], -0.02))
				throw new Error(`the bench walk's CoP (${cop[3 * m].toFixed(3)}, ${cop[3 * m + 2].toFixed(3)}) m leaves ${plate.name}`);
		}
		return { plate, signals: labToPlate(plate, { grf, cop, freeMoment }) };
	});
	writeFileSync(join(dir, 'walk.csv'), recordingCsv({ ...sim.sim, time, q }));
	writeFileSync(join(dir, 'walk.forces.csv'), forcesCsv(forceTime, signals, 4));
	writeFileSync(join(dir, 'setup.json'), JSON.stringify(sim.setup));
}

const cpuMs = () => {
	const u = process.cpuUsage();
	return (u.user + u.system) / 1000;
};
/** Clock ticks per second of /proc's CPU times. */
const CLK_TCK = Number(spawnSync('getconf', ['CLK_TCK'], { encoding: 'utf8' }).stdout.trim()) || 100;
/** user + system CPU time (ms) of a process from /proc/<pid>/stat (resolution one clock tick, 10 ms at 100 Hz). */
function procCpuMs(pid: number): number {
	const stat = readFileSync(`/proc/${pid}/stat`, 'utf8');
	const f = stat.slice(stat.lastIndexOf(')') + 2).split(' ');
	// proc(5) numbers the fields from 1 (pid); after the command come state (3) … utime (14) and stime (15)
	return ((Number(f[11]) + Number(f[12])) * 1000) / CLK_TCK;
}
/** The CPU time of the cluster: the postmaster and every process it started (backends, WAL writer, checkpointer …). */
function clusterCpuMs(postmaster: number): number {
	let total = procCpuMs(postmaster);
	for (const entry of spawnSync('ps', ['-o', 'pid=', '--ppid', String(postmaster)], { encoding: 'utf8' }).stdout.split('\n')) {
		const pid = Number(entry.trim());
		if (pid) {
			try {
				total += procCpuMs(pid);
			} catch {
				/* ended meanwhile */
			}
		}
	}
	return total;
}

const ms = (t: number) => `${t.toFixed(0).padStart(7)} ms`;

async function main() {
	if (process.argv[2] === '--write') return writeTrial(process.argv[3]);
	if (process.argv[2] === '--prepare') return prepareDatabase(process.argv[3], { seed: true, log: () => {} });
	const dir = mkdtempSync(join(tmpdir(), 'momentry-bench-'));
	try {
		// written by a child process, so that its memory does not count in this process's peak
		const child = spawnSync(process.execPath, [...process.execArgv, fileURLToPath(import.meta.url), '--write', dir], {
			stdio: 'inherit',
			env: process.env
		});
		if (child.status !== 0) throw new Error(`writing the benchmark trial failed (exit ${child.status})`);
		const anglesFile = join(dir, 'walk.csv'),
			forcesFile = join(dir, 'walk.forces.csv');
		const setup = sessionSetupSchema.parse(JSON.parse(readFileSync(join(dir, 'setup.json'), 'utf8')));
		const built = buildSessionModel(body, setup);
		console.log(
			`trial: ${SECONDS} s of walking, ${built.dofs.length} coordinates (both legs on a moving pelvis) at ${ANGLE_HZ} Hz (${(statSync(anglesFile).size / 2 ** 20).toFixed(1)} MiB), two plates at ${ANGLE_HZ * RATIO} Hz (${(statSync(forcesFile).size / 2 ** 20).toFixed(1)} MiB); Node ${process.version}`
		);

		// the store: a throw-away cluster with our schema and the demo data, a new run of a demo walking trial
		const cluster = await startScratchCluster(dir, 'bench');
		try {
			// schema and demo data (whose seed computes the demo runs) in a child process too, for the same reason
			const prep = spawnSync(process.execPath, [...process.execArgv, fileURLToPath(import.meta.url), '--prepare', cluster.url], {
				stdio: 'inherit',
				env: process.env
			});
			if (prep.status !== 0) throw new Error(`preparing the benchmark database failed (exit ${prep.status})`);
			const sequelize = db(cluster.url);
			const [trial] = await sequelize.query<{ id: string; sha256: string }>(
				`SELECT id, sha256 FROM trials WHERE force_file_name IS NOT NULL ORDER BY created_at LIMIT 1`,
				{ type: QueryTypes.SELECT }
			);
			// twice: the first pass in a fresh process (code not yet compiled by V8), then the same trial again as a worker that
			// has run trials before sees it
			for (const pass of ['first pass (fresh process)', 'second pass (warm, as a long-running worker)']) {
				console.log(`\n${pass}`);
				const [run] = await sequelize.query<{ id: string }>(
					`INSERT INTO runs (trial_id, state, attempts, options, raw_sha256, software_version) VALUES (:trial, 'running', 1, '{}', :sha, 'bench') RETURNING id`,
					{ replacements: { trial: trial.id, sha: trial.sha256 }, type: QueryTypes.SELECT }
				);
				const rssBefore = process.resourceUsage().maxRSS;
				const stages: [string, number, number][] = [];
				let t0 = performance.now(),
					c0 = cpuMs();
				const options = runOptionsSchema.parse({ cutoffHz: 6 });
				const angles = await parseRecording(createReadStream(anglesFile, { highWaterMark: 1 << 20 }), {
					fileName: 'walk.csv',
					expected: built.expected
				});
				if (!angles.ok) throw new Error(`the angle file did not parse: ${JSON.stringify(angles.problems.slice(0, 3))}`);
				const anglesCpu = cpuMs() - c0;
				const forces = await parseRecording(createReadStream(forcesFile, { highWaterMark: 1 << 20 }), {
					fileName: 'walk.forces.csv',
					expected: forceChannelsOf(plates, { thresholdN: DEFAULT_CONTACT_THRESHOLD_N })
				});
				if (!forces.ok) throw new Error(`the force file did not parse: ${JSON.stringify(forces.problems.slice(0, 3))}`);
				const paired = pairForceRecording(angles.recording, forces.recording, { angle: 'walk.csv', force: 'walk.forces.csv' });
				if (!paired.ok) throw new Error(`the files do not pair: ${JSON.stringify(paired.problems.slice(0, 3))}`);
				stages.push(['parse + validate + pair', performance.now() - t0, cpuMs() - c0]);
				stages.push(['  of which the angle file', NaN, anglesCpu]);

				t0 = performance.now();
				c0 = cpuMs();
				const { pairing } = paired;
				const computed = computeRun(body, setup, angles.recording, options, undefined, {
					fileName: 'walk.forces.csv',
					forceHz: pairing.forceHz,
					ratio: pairing.ratio,
					plates,
					recording: pairing.force
				});
				const computeWall = performance.now() - t0,
					computeCpu = cpuMs() - c0;
				const tm = computed.timings;
				for (const [key, label] of [
					['forces', 'forces: filter, resample, contacts'],
					['filter', 'angles: filter'],
					['differentiate', 'angles: differentiate'],
					['dynamics', 'inverse dynamics with GRF'],
					['gait', 'events, cycles, parameters']
				] as const)
					if (typeof tm[key] === 'number') stages.push([`  ${label}`, tm[key], NaN]);
				stages.push(['compute (all of the above)', computeWall, computeCpu]);
				const gait = computed.gait!;
				const used = (gait.contacts as { used: boolean }[]).filter((c) => c.used).length;

				// store: the worker's own writeResults in one transaction, on one backend whose CPU time we read from /proc
				const [{ pid: backend }] = await sequelize.query<{ pid: number }>(`SELECT pg_backend_pid() AS pid`, { type: QueryTypes.SELECT });
				const postmaster = Number(readFileSync(`/proc/${backend}/stat`, 'utf8').split(') ')[1].split(' ')[1]);
				const series = computed.series.length,
					bytes = computed.series.reduce((a, s) => a + s.data.byteLength, 0);
				t0 = performance.now();
				c0 = cpuMs();
				let pgBackend = 0;
				const pgCluster0 = clusterCpuMs(postmaster);
				await sequelize.transaction(async (t) => {
					const [{ pid }] = await sequelize.query<{ pid: number }>(`SELECT pg_backend_pid() AS pid`, {
						type: QueryTypes.SELECT,
						transaction: t
					});
					const b0 = procCpuMs(pid);
					await writeResults(run.id, computed, t);
					pgBackend = procCpuMs(pid) - b0;
				});
				const pgCluster = clusterCpuMs(postmaster) - pgCluster0;
				stages.push([`store (${series} series, ${(bytes / 2 ** 20).toFixed(1)} MiB, run_gait)`, performance.now() - t0, cpuMs() - c0]);
				const peakMiB = process.resourceUsage().maxRSS / 1024;

				const counted = stages.filter(([name]) => !name.startsWith('  '));
				const wall = counted.reduce((a, [, t]) => a + t, 0),
					nodeCpu = counted.reduce((a, [, , c]) => a + c, 0);
				console.log(
					`${gait.contacts.length} plate contacts (${used} used for moments), ${gait.events.length} gait events, ${gait.cycles.length} cycles`
				);
				console.log(`${'stage'.padEnd(46)} ${'wall'.padStart(10)} ${'CPU Node'.padStart(10)}`);
				for (const [name, t, c] of stages)
					console.log(`${name.padEnd(46)} ${Number.isNaN(t) ? ''.padStart(10) : ms(t)} ${Number.isNaN(c) ? '' : ms(c)}`);
				console.log('');
				console.log(`${'measure'.padEnd(46)} ${'value'.padStart(10)}   target`);
				console.log(`${'CPU, Node (this process)'.padEnd(46)} ${ms(nodeCpu)}`);
				console.log(`${'CPU, PostgreSQL backend (store)'.padEnd(46)} ${ms(pgBackend)}`);
				console.log(`${'CPU, PostgreSQL all processes (store)'.padEnd(46)} ${ms(pgCluster)}`);
				console.log(
					`${'CPU, total (Node + PostgreSQL, all processes)'.padEnd(46)} ${ms(nodeCpu + Math.max(pgCluster, pgBackend))}   < 2000 ms`
				);
				console.log(`${'wall time'.padEnd(46)} ${ms(wall)}`);
				console.log(
					`${'peak memory (maxRSS of this process)'.padEnd(46)} ${`${peakMiB.toFixed(0)} MiB`.padStart(10)}   < 300 MiB (before parsing: ${(rssBefore / 1024).toFixed(0)} MiB)`
				);
			}
		} finally {
			await closeDb();
			await cluster.stop();
		}
	} finally {
		rmSync(dir, { recursive: true, force: true });
	}
}

main().catch((e) => {
	console.error(e);
	process.exit(1);
});
