import { error } from '@sveltejs/kit';
import { can } from '$lib/permissions';
import { REFERENCE_DEPENDENCE } from '$lib/offsets';
import { withShop } from '$lib/server/db/tenant';
import { requireMember } from '$lib/server/guard';
import { machineFromParam } from '$lib/server/machines/load';
import { listReferences } from '$lib/server/offsets/machine-state';
import { machineOverview } from '$lib/server/offsets/overview';
import { registerFromParam, registerHistory } from '$lib/server/readings/history';
import type { PageServerLoad } from './$types';

type Overview = Awaited<ReturnType<typeof machineOverview>>;

/** The register's current value, status and findings, in the shape the offsets API gives. */
function currentOf(o: Overview, kind: 'tool' | 'work', register: string) {
	const row =
		kind === 'tool'
			? o.toolRows.find((t) => String(t.h) === register)
			: o.fixtureRows.find((f) => f.register === register);
	return row
		? { value: row.value, measuredAt: row.measuredAt, status: row.status, findings: row.findings }
		: null;
}

/** What a reading saved over a Stop says about itself, or null for an ordinary save. */
function overrideOf(
	r: { override_reason: string; overridden_findings: string[] } | undefined
): { reason: string; kinds: string[] } | null {
	return r && r.overridden_findings.length > 0
		? { reason: String(r.override_reason), kinds: r.overridden_findings }
		: null;
}

/** Every recorded version of one offset: table, drift chart, and links to correct a reading. */
export const load: PageServerLoad = async (event) => {
	const { shop, role } = await requireMember(event, 'machines.read');
	const kind = event.params.kind;
	if (kind !== 'tool' && kind !== 'work') error(404, 'History is kept for tool and work offsets.');
	const register = registerFromParam(kind, event.params.register);
	if (!register) error(404, 'No such offset register.');
	return withShop(shop, async (trx) => {
		const machine = await machineFromParam(trx, event.params.machine);
		const overview = await machineOverview(trx, machine);
		const references = await listReferences(trx, machine.id);
		const rows = await registerHistory(trx, machine, kind, register);
		const tools = overview.toolRows.filter((t) => kind === 'tool' && String(t.h) === register);
		const fixture = overview.fixtureRows.find((f) => kind === 'work' && f.register === register);
		if (rows.length === 0 && tools.length === 0 && !fixture)
			error(404, `${machine.name} has no ${kind === 'tool' ? `H${register}` : register}.`);
		const dep = REFERENCE_DEPENDENCE[machine.convention];
		const savedId = Number(event.url.searchParams.get('saved')) || null;
		// A reading saved over a Stop gets a message that says so (not a green "saved").
		const saved: { override_reason: string; overridden_findings: string[] } | undefined =
			savedId && Number.isSafeInteger(savedId)
				? await trx('readings')
						.where({ id: savedId, machine_id: machine.id })
						.first('override_reason', 'overridden_findings')
				: undefined;
		return {
			machine,
			kind: kind as 'tool' | 'work',
			register,
			label: kind === 'tool' ? `H${register}` : register,
			tools: tools.map((t) => ({ id: t.id, t: t.t, description: t.description })),
			fixture: fixture ? { id: fixture.id, name: fixture.name } : null,
			rows,
			current: currentOf(overview, kind, register),
			references: references.map((r) => ({
				version: r.version,
				establishedAt: r.establishedAt,
				instrument: r.instrument
			})),
			dependsOnReference:
				kind === 'tool'
					? dep.machineShift.tools || dep.surfaceMoved.tools
					: dep.machineShift.work || dep.surfaceMoved.work,
			savedReadingId: savedId,
			savedOverride: overrideOf(saved),
			canRecord: can(role, 'setups.write')
		};
	});
};
