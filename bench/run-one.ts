/**
 * One measured run in a fresh process (so one run's memory never shows in another's):
 * `node --import tsx bench/run-one.ts <runner> <file>` prints one JSON line.
 * Runners:
 * - `datumkeep`: checkProgramStream fed from a file read stream, as the server runs it (the
 *   full check; the file is read a second time only when a subprogram is called before its
 *   body, as in the posted-style program). It reads the file's bytes, as the server does: the
 *   check needs no decoding into strings.
 * - `floor`: the same read stream (bytes, as Datumkeep reads them), only counting lines: the
 *   least any check of the file costs.
 * - `gcode-parser-stream`: gcode-parser's GCodeLineStream piped from the same file stream,
 *   results consumed and dropped (its own streaming API, memory kept flat).
 * - `gcode-parser-lines`: gcode-parser's parseLine called on every line split by hand from
 *   the same stream (its fastest path: no stream machinery, no batching).
 */
import { createReadStream } from 'node:fs';
import { Writable } from 'node:stream';
import { pipeline } from 'node:stream/promises';
import gcodeParser from 'gcode-parser';
import { checkProgramStream } from '../src/lib/offsets';
import { startSampler } from './memory';
import { BENCH_SETUP } from './setup';

const CHUNK = 1 << 20;
/**
 * The gcode-parser runners take text: they decode the file the same way. latin1 by default: a program is ASCII, latin1
 * never fails on a stray byte and is the cheapest decode; BENCH_ENCODING=utf8 to compare.
 */
const ENCODING = (process.env.BENCH_ENCODING ?? 'latin1') as BufferEncoding;

async function datumkeep(file: string, sample: () => void): Promise<Record<string, unknown>> {
	let passes = 0;
	async function* read(): AsyncIterable<Uint8Array> {
		passes++;
		for await (const chunk of createReadStream(file, { highWaterMark: CHUNK }))
			yield chunk as Buffer;
	}
	const { findings, stats } = await checkProgramStream(read, BENCH_SETUP, () => sample());
	return {
		lines: stats.lines,
		moves: stats.moves,
		findings: findings.length,
		passes,
		callsFollowed: stats.callsFollowed
	};
}

async function floor(file: string, sample: () => void): Promise<Record<string, unknown>> {
	let lines = 0;
	for await (const chunk of createReadStream(file, { highWaterMark: CHUNK })) {
		const bytes = chunk as Buffer;
		let nl = bytes.indexOf(10);
		while (nl >= 0) {
			lines++;
			nl = bytes.indexOf(10, nl + 1);
		}
		sample();
	}
	return { lines };
}

async function parserStream(file: string, sample: () => void): Promise<Record<string, unknown>> {
	let lines = 0;
	const sink = new Writable({
		objectMode: true,
		write(_row, _enc, done) {
			if (++lines % 65536 === 0) sample();
			done();
		}
	});
	await pipeline(
		createReadStream(file, { encoding: ENCODING, highWaterMark: CHUNK }),
		new gcodeParser.GCodeLineStream(),
		sink
	);
	return { lines };
}

async function parserLines(file: string, sample: () => void): Promise<Record<string, unknown>> {
	let lines = 0;
	let words = 0;
	let carry = '';
	const one = (line: string) => {
		const t = line.trim();
		if (t.length === 0) return;
		lines++;
		words += gcodeParser.parseLine(t).words.length;
	};
	for await (const chunk of createReadStream(file, { encoding: ENCODING, highWaterMark: CHUNK })) {
		const text = carry + (chunk as string);
		let start = 0;
		let nl = text.indexOf('\n');
		while (nl >= 0) {
			one(text.slice(start, nl));
			start = nl + 1;
			nl = text.indexOf('\n', start);
		}
		carry = text.slice(start);
		sample();
	}
	if (carry) one(carry);
	return { lines, words };
}

const RUNNERS = {
	datumkeep,
	floor,
	'gcode-parser-stream': parserStream,
	'gcode-parser-lines': parserLines
} as const;

const [runner, file] = process.argv.slice(2) as [keyof typeof RUNNERS, string];
const run = RUNNERS[runner];
if (!run || !file) {
	console.error(`usage: run-one.ts <${Object.keys(RUNNERS).join('|')}> <file>`);
	process.exit(2);
}
(globalThis as { gc?: () => void }).gc?.();
const sampler = startSampler();
const cpu0 = process.cpuUsage();
const t0 = performance.now();
const result = await run(file, sampler.sample);
const ms = performance.now() - t0;
// CPU time as well as wall time: on a shared machine other work stretches the wall clock.
const cpu = process.cpuUsage(cpu0);
const cpuMs = (cpu.user + cpu.system) / 1000;
const memory = sampler.stop();
console.log(JSON.stringify({ runner, file, encoding: ENCODING, ms, cpuMs, ...result, memory }));
