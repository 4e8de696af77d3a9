import { createReadStream } from 'node:fs';
import { createInterface } from 'node:readline';

/*
 * Reading some lines of a stored program as a stream: programs can be tens of megabytes, so
 * their text never sits in memory whole.
 */

/** Lines `from`…`to` (1-based, inclusive) of a stored text, read as a stream (big files stay out of memory). */
export async function readLines(
	path: string,
	from: number,
	to: number,
	maxChars = 400
): Promise<{ n: number; text: string }[]> {
	const out: { n: number; text: string }[] = [];
	const stream = createReadStream(path, { encoding: 'utf8' });
	const lines = createInterface({ input: stream, crlfDelay: Infinity });
	let n = 0;
	try {
		for await (const raw of lines) {
			n++;
			if (n < from) continue;
			if (n > to) break;
			const text = n === 1 ? raw.replace(/^\uFEFF/, '') : raw;
			out.push({ n, text: text.length > maxChars ? `${text.slice(0, maxChars)} …` : text });
		}
	} finally {
		lines.close();
		stream.destroy();
	}
	return out;
}

/** The text of some lines of a stored file (for findings beside their code), read as a stream. */
export async function readLineSet(
	path: string,
	wanted: number[],
	maxChars = 200
): Promise<Map<number, string>> {
	const out = new Map<number, string>();
	if (wanted.length === 0) return out;
	const want = new Set(wanted);
	const last = Math.max(...wanted);
	const stream = createReadStream(path, { encoding: 'utf8' });
	const lines = createInterface({ input: stream, crlfDelay: Infinity });
	let n = 0;
	try {
		for await (const raw of lines) {
			n++;
			if (want.has(n)) {
				const text = n === 1 ? raw.replace(/^\uFEFF/, '') : raw;
				out.set(n, text.length > maxChars ? `${text.slice(0, maxChars)} …` : text);
			}
			if (n >= last) break;
		}
	} catch {
		// A missing file: the findings show without their code.
	} finally {
		lines.close();
		stream.destroy();
	}
	return out;
}
