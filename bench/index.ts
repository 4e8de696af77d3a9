/**
 * `npm run bench`: the program check against a generated 100 000- and 1 000 000-line program
 * and a 1 000 000-line posted-style one (subprograms after M30), the npm package gcode-parser
 * (2.2.0) reading the same files, and a bare read that only counts lines (the floor), each run
 * in a fresh process.
 * Figures go to the console and to bench/out/results.json; docs/PERFORMANCE.md explains them.
 * Options: BENCH_RUNS (default 5; the median is reported: this machine swings ±25 % between
 * runs of the same code), BENCH_SKIP_GENERATE=1.
 * Then the fleet board API under load (bench/fleet.ts, its own process). `npm run bench -- fleet`
 * runs only that one, `npm run bench -- program` only the program check. `npm run bench -- scale`
 * runs only the scale bench (bench/scale.ts: 10 → 100 → 1,000 shops behind `npm run cluster`).
 * scripts/bench.sh starts PostgreSQL and Redis first, as `npm test` does.
 */
import { execFileSync } from 'node:child_process';
import { existsSync, mkdirSync, statSync, writeFileSync } from 'node:fs';
import { cpus, loadavg } from 'node:os';
import { dirname, join } from 'node:path';
import { fileURLToPath } from 'node:url';
import { generatePostedProgram, generateProgram } from './generate';

interface RunResult {
	runner: string;
	ms: number;
	cpuMs: number;
	lines: number;
	memory: { baseRss: number; baseHeap: number; peakRss: number; peakHeap: number };
}

const here = dirname(fileURLToPath(import.meta.url));
const outDir = join(here, 'out');
const RUNS = Number(process.env.BENCH_RUNS ?? 5);
const SIZES = [
	{ name: '100k', lines: 100_000, make: generateProgram },
	{ name: '1M', lines: 1_000_000, make: generateProgram },
	{ name: 'posted-1M', lines: 1_000_000, make: generatePostedProgram }
];
const RUNNERS = ['datumkeep', 'floor', 'gcode-parser-stream', 'gcode-parser-lines'];

function runOnce(runner: string, file: string): RunResult {
	const out = execFileSync(
		process.execPath,
		['--expose-gc', '--import', 'tsx', join(here, 'run-one.ts'), runner, file],
		{ encoding: 'utf8', maxBuffer: 1 << 20 }
	);
	return JSON.parse(out.trim().split('\n').pop()!) as RunResult;
}

function median(values: number[]): number {
	const s = [...values].sort((a, b) => a - b);
	return s[Math.floor(s.length / 2)];
}

const mb = (bytes: number) => (bytes / 1024 / 1024).toFixed(1);

async function main(): Promise<void> {
	mkdirSync(outDir, { recursive: true });
	const files: Record<string, string> = {};
	for (const size of SIZES) {
		const file = join(outDir, `program-${size.name}.nc`);
		if (process.env.BENCH_SKIP_GENERATE !== '1' || !existsSync(file)) {
			await size.make(file, size.lines);
		}
		files[size.name] = file;
		console.log(`program ${size.name}: ${mb(statSync(file).size)} MiB, ${file}`);
	}
	console.log(
		`node ${process.version}, ${cpus().length} × ${cpus()[0]?.model ?? 'cpu'}, ${RUNS} runs each (median)`
	);
	const rows: Record<string, unknown>[] = [];
	for (const size of SIZES) {
		// Runners take turns run by run, so a burst of load elsewhere hits them all alike.
		const runs: Record<string, RunResult[]> = Object.fromEntries(RUNNERS.map((r) => [r, []]));
		for (let i = 0; i < RUNS; i++)
			for (const runner of RUNNERS) runs[runner].push(runOnce(runner, files[size.name]));
		for (const runner of RUNNERS) {
			const list = runs[runner];
			const ms = median(list.map((r) => r.ms));
			const cpuMs = median(list.map((r) => r.cpuMs));
			const row = {
				size: size.name,
				runner,
				lines: list[0].lines,
				ms: Math.round(ms),
				cpuMs: Math.round(cpuMs),
				linesPerSecond: Math.round((list[0].lines / ms) * 1000),
				linesPerCpuSecond: Math.round((list[0].lines / cpuMs) * 1000),
				peakRssMiB: Number(mb(Math.max(...list.map((r) => r.memory.peakRss)))),
				baseRssMiB: Number(mb(list[0].memory.baseRss)),
				peakHeapUsedMiB: Number(mb(Math.max(...list.map((r) => r.memory.peakHeap)))),
				baseHeapUsedMiB: Number(mb(list[0].memory.baseHeap)),
				allMs: list.map((r) => Math.round(r.ms))
			};
			rows.push(row);
			console.log(
				`${size.name.padEnd(5)} ${runner.padEnd(20)} ${String(row.ms).padStart(6)} ms ` +
					`(cpu ${String(row.cpuMs).padStart(5)} ms)  ${(row.linesPerSecond / 1e6).toFixed(2)} M lines/s  ` +
					`peak RSS ${row.peakRssMiB} MiB  peak heapUsed ${row.peakHeapUsedMiB} MiB ` +
					`(runs ${row.allMs.join(', ')} ms)`
			);
		}
	}
	const row = (size: string, runner: string) =>
		rows.find((r) => r.size === size && r.runner === runner) as Record<string, number>;
	for (const size of SIZES) {
		const dk = row(size.name, 'datumkeep');
		const ratio = (other: string, field: string) =>
			(dk[field] / row(size.name, other)[field]).toFixed(1);
		const floor = row(size.name, 'floor');
		console.log(
			`${size.name}: Datumkeep vs the bare read (floor): ${(dk.ms / floor.ms).toFixed(1)}× its wall time ` +
				`(${(dk.cpuMs / floor.cpuMs).toFixed(1)}× cpu); peak RSS ${dk.peakRssMiB} MiB vs ${floor.peakRssMiB} MiB, ` +
				`${(dk.peakRssMiB - floor.peakRssMiB).toFixed(1)} MiB above the floor's`
		);
		console.log(
			`${size.name}: Datumkeep / gcode-parser throughput, wall (cpu): ` +
				`${ratio('gcode-parser-stream', 'linesPerSecond')}× (${ratio('gcode-parser-stream', 'linesPerCpuSecond')}×) vs its stream, ` +
				`${ratio('gcode-parser-lines', 'linesPerSecond')}× (${ratio('gcode-parser-lines', 'linesPerCpuSecond')}×) vs parseLine per line`
		);
	}
	console.log(
		`load average at the end: ${loadavg()
			.map((l) => l.toFixed(2))
			.join(' ')}`
	);
	writeFileSync(
		join(outDir, 'results.json'),
		JSON.stringify(
			{ node: process.version, cpus: cpus().length, runs: RUNS, loadavg: loadavg(), rows },
			null,
			2
		)
	);
}

const only = process.argv[2];
if (only && only !== 'fleet' && only !== 'program' && only !== 'scale') {
	console.error(`npm run bench [-- fleet | program | scale]; got "${only}"`);
	process.exit(1);
}
// The scale bench (bench/scale.ts) runs only when asked for: it takes many minutes.
if (only === 'scale') {
	execFileSync(process.execPath, ['--import', 'tsx', join(here, 'scale.ts')], { stdio: 'inherit' });
	process.exit(0);
}
(only === 'fleet' ? Promise.resolve() : main())
	.then(() => {
		if (only === 'program') return;
		execFileSync(process.execPath, ['--import', 'tsx', join(here, 'fleet.ts')], {
			stdio: 'inherit'
		});
	})
	.catch((e) => {
		console.error(e);
		process.exit(1);
	});
