/**
 * Writes a realistic milling program of a given number of lines: the demo pump housing (ops A
 * and B on two fixtures of different heights, Mill 1, inch), several tools, drilling cycles,
 * contours with arcs, comments and sequence numbers, every retract made to the clearance plane
 * before a move between fixtures. Example data, invented (DESIGN.md §9).
 */
import { createWriteStream } from 'node:fs';
import { once } from 'node:events';

/** One op on one fixture with one tool: about 40 lines, pushed to `out`. */
function op(out: string[], n: { seq: number }, tool: number, reg: string, k: number): void {
	const N = () => `N${(n.seq += 5)}`;
	const x = (k % 7) + 1;
	out.push(`(OP ${reg} T${tool} PASS ${k})`);
	out.push(`${N()} T${tool} M6`);
	out.push(`${N()} ${reg} G90 G0 X${x}.0 Y1.0 S6000 M3`);
	out.push(`${N()} G43 H${tool} Z5.0 M8`);
	out.push(`Z0.1`);
	out.push(`G1 Z-0.05 F20.`);
	for (let i = 0; i < 6; i++) {
		out.push(`G1 X${(x + 0.5 * i).toFixed(4)} Y${(1 + 0.25 * i).toFixed(4)} F40.`);
		out.push(
			`G2 X${(x + 0.5 * i + 0.25).toFixed(4)} Y${(1.25 + 0.25 * i).toFixed(4)} I0.125 J0.125`
		);
		out.push(`G3 X${(x + 0.5 * i).toFixed(4)} Y${(1.5 + 0.25 * i).toFixed(4)} R0.25 ; blend`);
	}
	out.push(`G0 Z0.1`);
	out.push(`G98 G81 X${x}.5 Y2.0 Z-0.6 R0.1 F12.`);
	for (let i = 0; i < 8; i++)
		out.push(`X${(x + 0.375 * i).toFixed(4)} Y${(2 + 0.1 * i).toFixed(4)}`);
	out.push(`G80`);
	out.push(`G0 Z5.0 (clear of both fixtures)`);
	out.push(`G91 G28 Z0.`);
	out.push(`G90 M9`);
}

/** Writes a program of at least `lines` lines to `path`; returns the count written. */
export async function generateProgram(path: string, lines: number): Promise<number> {
	const file = createWriteStream(path);
	const head = ['%', 'O2001 (PUMP HOUSING OPS A B - DATUMKEEP BENCH)', 'G20 G17 G40 G80 G90'];
	let written = 0;
	const write = async (chunk: string[]) => {
		written += chunk.length;
		if (!file.write(chunk.join('\n') + '\n')) await once(file, 'drain');
	};
	await write(head);
	const n = { seq: 0 };
	let k = 0;
	while (written < lines - 3) {
		const out: string[] = [];
		while (out.length < 2000) {
			op(out, n, (k % 4) + 1, k % 2 === 0 ? 'G54' : 'G55', k);
			k++;
		}
		const room = lines - 2 - written;
		await write(out.length > room ? out.slice(0, room) : out);
	}
	await write(['M30', '%']);
	file.end();
	await once(file, 'finish');
	return written;
}

/**
 * One posted-style op: tool change with the safe-start block, G43 H, a pocket by subprogram
 * (M98 P to a body after M30), a drilling cycle, a retract home. About 30 lines.
 */
function postedOp(out: string[], n: { seq: number }, tool: number, reg: string, k: number): void {
	const N = () => `N${(n.seq += 10)}`;
	const x = ((k % 9) + 1).toFixed(1);
	out.push(`(OP ${k + 1} - T${tool} ${reg})`);
	out.push(`${N()} G0 G17 G40 G49 G80 G90 G20`);
	out.push(`${N()} T${tool} M6`);
	out.push(`${N()} G0 G90 ${reg} X${x} Y1. S${4000 + tool * 500} M3`);
	out.push(`${N()} G43 H${tool} Z5. M8`);
	out.push(`${N()} M98 P${1000 + tool}`);
	out.push(`${N()} G0 Z5.`);
	out.push(`${N()} G99 G83 X${x} Y2. Z-0.5 R0.1 Q0.1 F8.`);
	for (let i = 1; i <= 6; i++) out.push(`${N()} X${(Number(x) + 0.3 * i).toFixed(4)}`);
	out.push(`${N()} G80`);
	out.push(`${N()} G0 Z5.`);
	for (let i = 0; i < 8; i++) {
		out.push(`${N()} G1 X${(Number(x) + 0.2 * i).toFixed(4)} Y${(1.5 + 0.1 * i).toFixed(4)} F50.`);
		out.push(
			`${N()} G3 X${(Number(x) + 0.2 * i + 0.1).toFixed(4)} Y${(1.6 + 0.1 * i).toFixed(4)} R0.1`
		);
	}
	out.push(`${N()} M9`);
	out.push(`${N()} G91 G28 Z0.`);
	out.push(`${N()} G90`);
}

/** A subprogram body: a pocket at the current X Y, absolute heights, ends above the part. */
function postedSub(tool: number): string[] {
	const out = [`O${1000 + tool} (POCKET T${tool})`, 'G0 Z0.1', 'G1 Z-0.1 F15.'];
	for (let i = 0; i < 4; i++) {
		out.push(`G91 X0.5 F40.`, `Y0.25`, `X-0.5`, `Y0.25`, `G90`);
	}
	out.push('G0 Z1.', 'M99');
	return out;
}

/**
 * Writes a posted-style program of about `lines` lines (ISO-style: %, O number, N words, the
 * safe-start block on every tool, G43 H, peck cycles, G91 G28 Z0 returns, and subprograms
 * after M30 called with M98 P), for the same setup; every move clear, so nothing is found.
 * Example data, invented (DESIGN.md §9).
 */
export async function generatePostedProgram(path: string, lines: number): Promise<number> {
	const file = createWriteStream(path);
	const subs = ['%', ...[1, 2, 3, 4].flatMap(postedSub), '%'];
	let written = 0;
	const write = async (chunk: string[]) => {
		written += chunk.length;
		if (!file.write(chunk.join('\n') + '\n')) await once(file, 'drain');
	};
	await write(['%', 'O2002 (PUMP HOUSING OPS A B - POSTED STYLE, DATUMKEEP BENCH)']);
	const n = { seq: 0 };
	let k = 0;
	const room = () => lines - subs.length - 2 - written;
	while (room() > 0) {
		const out: string[] = [];
		while (out.length < 2000) {
			postedOp(out, n, (k % 4) + 1, k % 2 === 0 ? 'G54' : 'G55', k);
			k++;
		}
		// Whole ops only, so every tool change keeps its G43 and every call its retract.
		let cut = out.length;
		if (cut > room()) {
			cut = 0;
			for (let i = 1; i <= room(); i++) if (out[i]?.startsWith('(OP ')) cut = i;
		}
		if (cut === 0) break;
		await write(out.slice(0, cut));
	}
	await write([`N${(n.seq += 10)} M30`, ...subs]);
	file.end();
	await once(file, 'finish');
	return written;
}
