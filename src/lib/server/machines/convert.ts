import type { Knex } from 'knex';
import {
	convertTable,
	spindleZ,
	type Convention,
	type ConversionGeometry,
	type OffsetTable
} from '$lib/offsets';
import { audit } from '../audit';
import { recheckMachine } from '../fleet/recheck';
import {
	currentOffsets,
	listReferences,
	tableFrom,
	type MachineRecord
} from '../offsets/machine-state';
import type { Actor } from '../actor';

export interface PairCheck {
	register: string;
	h: string;
	before: number;
	after: number;
}

export interface ConversionPlan {
	from: OffsetTable;
	to: OffsetTable;
	/** Spindle Z at program zero (W + H, NISTIR 6556 composition) for every fixture/tool pair, before and after. */
	pairs: PairCheck[];
}

/**
 * Works out a machine's table in another convention without saving anything. The engine keeps
 * W_k + H_i for every pair; `pairs` shows it so the lead can see it, and `convertMachine`
 * refuses to save if any pair moved (it never should).
 */
export async function planConversion(
	trx: Knex.Transaction,
	machine: MachineRecord,
	target: Convention,
	geometry: ConversionGeometry
): Promise<ConversionPlan> {
	await recordGaugeLineZ(trx, machine, geometry.referenceGaugeLineZ, false);
	const from = tableFrom(machine, await currentOffsets(trx, machine.id));
	const to = convertTable(from, target, geometry);
	const pairs: PairCheck[] = [];
	for (const register of Object.keys(from.work)) {
		for (const h of Object.keys(from.tools)) {
			pairs.push({
				register,
				h,
				before: spindleZ(from.work[register], from.tools[h]),
				after: spindleZ(to.work[register], to.tools[h])
			});
		}
	}
	return { from, to, pairs };
}

export class ConversionRefused extends Error {}

/**
 * A gauge-line Z given for the conversion becomes part of the reference record when the record
 * had none (filled in once; see the 20261203080000 migration). One that contradicts a recorded
 * value is refused: a different R means the reference itself changed, which is re-establishing.
 */
async function recordGaugeLineZ(
	trx: Knex.Transaction,
	machine: MachineRecord,
	r: number | undefined,
	write: boolean
) {
	if (r === undefined) return;
	const [reference] = await listReferences(trx, machine.id);
	if (!reference) return;
	if (reference.gaugeLineZ === null) {
		if (write)
			await trx('reference_surfaces').where({ id: reference.id }).update({ gauge_line_z: r });
	} else if (Math.abs(reference.gaugeLineZ - r) > 1e-9) {
		throw new ConversionRefused(
			`differs from the gauge-line Z recorded on reference v${reference.version} (${reference.gaugeLineZ}); re-establish the reference to record a new one`
		);
	}
}

/** Converts and records: the machine's convention, a new offset version of every register, an audit entry — one transaction. */
export async function convertMachine(
	trx: Knex.Transaction,
	machine: MachineRecord,
	target: Convention,
	geometry: ConversionGeometry,
	by: Actor,
	ip = ''
): Promise<ConversionPlan> {
	const plan = await planConversion(trx, machine, target, geometry);
	await recordGaugeLineZ(trx, machine, geometry.referenceGaugeLineZ, true);
	const moved = plan.pairs.filter((p) => Math.abs(p.before - p.after) > 1e-9);
	if (moved.length > 0)
		throw new Error(`conversion moved ${moved.length} spindle Z value(s); nothing saved`);
	await trx('machines')
		.where({ id: machine.id })
		.update({
			convention: target,
			master_tool_h: target === 'master-tool' ? Number(plan.to.masterTool) : null
		});
	// A conversion re-expresses measurements; it measures nothing. Each new version keeps the
	// reading, reference version and time of the one it converts, so stale-age and
	// stale-reference say the same after converting as before (the audit log records when).
	const sources = new Map(
		(await currentOffsets(trx, machine.id)).map((o) => [`${o.kind}:${o.register}`, o])
	);
	const rows = [
		...Object.entries(plan.to.work).map(([register, value]) => ({ kind: 'work', register, value })),
		...Object.entries(plan.to.tools).map(([register, value]) => ({ kind: 'tool', register, value }))
	].map((r) => {
		const source = sources.get(`${r.kind}:${r.register}`);
		return {
			machine_id: machine.id,
			register_kind: r.kind,
			register: r.register,
			value: r.value,
			units: machine.units,
			convention: target,
			reading_id: source?.readingId ?? null,
			reference_version: source?.referenceVersion ?? 1,
			created_by: by.id,
			// Copied in SQL, not through a JS Date: PostgreSQL keeps microseconds and a Date does
			// not, and a converted version a few microseconds older than its source would lose.
			...(source
				? {
						created_at: trx.raw('(select created_at from offset_versions where id = ?)', [
							source.offsetVersionId
						])
					}
				: {})
		};
	});
	if (rows.length > 0) await trx('offset_versions').insert(rows);
	await audit(trx, {
		actorUserId: by.id,
		actorEmail: by.email,
		action: 'machine.convention-converted',
		target: machine.name,
		detail: { from: machine.convention, to: target, registers: rows.length, ...geometry },
		ip
	});
	await recheckMachine(
		trx,
		{
			...machine,
			convention: target,
			masterToolH: target === 'master-tool' ? Number(plan.to.masterTool) : null
		},
		{ what: `converting to ${target}`, by: by.id }
	);
	return plan;
}
