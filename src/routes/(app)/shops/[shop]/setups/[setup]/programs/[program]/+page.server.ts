import { can } from '$lib/permissions';
import { withShop } from '$lib/server/db/tenant';
import { requireMember } from '$lib/server/guard';
import { recheckAction, runNowAction, uploadAction } from '$lib/server/programs/actions';
import {
	BACKGROUND_MIN_BYTES,
	BACKGROUND_MIN_LINES,
	PROGRAM_EXTENSIONS,
	PROGRAM_MAX_BYTES
} from '$lib/server/programs/file';
import { programFromParams, versionResult } from '$lib/server/programs/load';
import { profileView } from '$lib/server/programs/profile-view';
import { findingLine, KIND_LABEL, summarize } from '$lib/server/programs/summary';
import type { Actions, PageServerLoad } from './$types';

export const load: PageServerLoad = async (event) => {
	const { shop, role } = await requireMember(event, 'machines.read');
	return withShop(shop, async (trx) => {
		const { setup, program } = await programFromParams(trx, event.params);
		const { versions, version, detail, lineText } = await versionResult(
			trx,
			program.id,
			event.url.searchParams.get('version')
		);
		const result = detail?.result ?? null;
		return {
			setup: {
				id: setup.id,
				name: setup.name,
				job: setup.job,
				machineName: setup.machine.name,
				machineId: setup.machine.id
			},
			program,
			versions,
			version,
			check: detail?.check ?? null,
			summary: detail && result ? summarize(detail.input, result) : null,
			profile: detail && result ? profileView(detail.input, result) : null,
			findings: (result?.findings ?? []).map((f) => {
				const line = findingLine(f);
				return {
					key: f.key,
					kind: f.kind,
					kindLabel: KIND_LABEL[f.kind] ?? f.kind,
					severity: f.severity,
					message: f.message,
					line,
					code: line === null ? null : (lineText.get(line) ?? null)
				};
			}),
			canWrite: can(role, 'setups.write'),
			limits: {
				maxBytes: PROGRAM_MAX_BYTES,
				backgroundBytes: BACKGROUND_MIN_BYTES,
				backgroundLines: BACKGROUND_MIN_LINES,
				extensions: [...PROGRAM_EXTENSIONS]
			}
		};
	});
};

export const actions: Actions = {
	upload: (event) => uploadAction(event, event.params.program),
	runNow: (event) => runNowAction(event),
	recheck: (event) => recheckAction(event)
};
