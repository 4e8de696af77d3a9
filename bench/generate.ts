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
