import { error } from '@sveltejs/kit';
import { withShop } from '$lib/server/db/tenant';
import { requireMember } from '$lib/server/guard';
import { programFromParams } from '$lib/server/programs/load';
import { getCheck, getVersionFile, listVersions, readLines } from '$lib/server/programs/store';
import { findingLine, KIND_LABEL } from '$lib/server/programs/summary';
import type { PageServerLoad } from './$types';

/** Up to this many lines the whole program is shown; longer ones show a window around the line. */
const WHOLE_UP_TO = 1_500;
const WINDOW = 120;

export const load: PageServerLoad = async (event) => {
	const { shop } = await requireMember(event, 'machines.read');
	return withShop(shop, async (trx) => {
		const { setup, program } = await programFromParams(trx, event.params);
		const versions = await listVersions(trx, program.id);
		const wanted = event.url.searchParams.get('version');
		const version =
			wanted === null ? versions[0] : versions.find((v) => v.version === Number(wanted));
		if (!version) error(404, 'No such version of this program.');
		const file = await getVersionFile(trx, program.id, version.id);
		const total = version.lineCount;
		const asked = Number(event.url.searchParams.get('line'));
		const line = Number.isSafeInteger(asked) && asked >= 1 && asked <= total ? asked : null;
		const at = Number(event.url.searchParams.get('from'));
		let from = 1;
		let to = total;
		if (total > WHOLE_UP_TO) {
			from =
				line !== null ? Math.max(1, line - WINDOW) : Number.isSafeInteger(at) && at > 0 ? at : 1;
			from = Math.min(from, Math.max(1, total - 2 * WINDOW));
			to = Math.min(total, from + 2 * WINDOW);
		}
		let lines: { n: number; text: string }[] = [];
		let missing = false;
		try {
			lines = file ? await readLines(file.path, from, to) : [];
		} catch {
			missing = true;
		}
		const detail = version.check ? await getCheck(trx, program.id, version.check.id) : undefined;
		const marks: Record<number, { severity: 'stop' | 'caution'; label: string }[]> = {};
		for (const f of detail?.result?.findings ?? []) {
			const n = findingLine(f);
			if (n === null || n < from || n > to) continue;
			(marks[n] ??= []).push({ severity: f.severity, label: KIND_LABEL[f.kind] ?? f.kind });
		}
		// Lines inside a "heights unknown" span (the check could not follow them).
		const unknown: Record<number, true> = {};
		for (const [a, b] of detail?.result?.stats.unknownSpans ?? [])
			for (let n = Math.max(a, from); n <= Math.min(b ?? to, to); n++) unknown[n] = true;
		return {
			unknown,
			setup: { id: setup.id, name: setup.name },
			program,
			version: { version: version.version, originalName: version.originalName, lineCount: total },
			line,
			from,
			to,
			lines,
			marks,
			missing,
			windowed: total > WHOLE_UP_TO,
			window: WINDOW
		};
	});
};
