import { error } from '@sveltejs/kit';
import type { Knex } from 'knex';
import { setupFromParam } from '../setups/load';
import type { SetupDetail } from '../setups/detail';
import {
	getCheck,
	getProgram,
	listVersions,
	getVersionFile,
	type CheckDetail,
	type VersionView
} from './queries';
import { readLineSet } from './text';
import { findingLine } from './summary';

/** The setup and program named in the URL, or 404 (also for another setup's or shop's ids). */
export async function programFromParams(
	trx: Knex.Transaction,
	params: { setup?: string; program?: string }
): Promise<{ setup: SetupDetail; program: { id: number; name: string; createdAt: string } }> {
	const setup = await setupFromParam(trx, params.setup);
	const program = await getProgram(trx, setup.id, params.program);
	if (!program) error(404, 'No such program on this setup.');
	return { setup, program };
}

/** Everything the result page and the report show for one version (default: the newest). */
export async function versionResult(
	trx: Knex.Transaction,
	programId: number,
	versionParam: string | null
): Promise<{
	versions: VersionView[];
	version: VersionView;
	detail: CheckDetail | null;
	lineText: Map<number, string>;
}> {
	const versions = await listVersions(trx, programId);
	const wanted = versionParam === null ? null : Number(versionParam);
	const version = wanted === null ? versions[0] : versions.find((v) => v.version === wanted);
	if (!version) error(404, 'No such version of this program.');
	const detail = version.check
		? ((await getCheck(trx, programId, version.check.id)) ?? null)
		: null;
	let lineText = new Map<number, string>();
	if (detail?.result) {
		const file = await getVersionFile(trx, programId, version.id);
		const lines = detail.result.findings.map(findingLine).filter((n): n is number => n !== null);
		if (file) lineText = await readLineSet(file.path, lines);
	}
	return { versions, version, detail, lineText };
}
