/**
 * Readings that waited on a device while the connection was down. The server computes and
 * checks them with the same functions as the reading forms (previewToolReading /
 * previewPartTopReading), then adds the checks only a late reading needs: the machine's
 * reference, the same register, or (for a part top) the touching tool's length offset changed
 * after the operator measured. Any of those, or any Stop finding, and nothing is recorded: the
 * operator sees why and decides at the reading form. A reading's `client_key` is unique, so the
 * same queued reading is recorded once however often it is sent.
 */
import type { Knex } from 'knex';
import { formatWithUnits } from '$lib/offsets';
import type { QueuedReading, QueuedReadingAnswer, QueueStop } from '$lib/schemas/queued-reading';
import { listReferences, type MachineRecord } from '../offsets/machine-state';
import {
	instrumentText,
	previewPartTopReading,
	previewToolReading,
	ReadingInputError,
	writeReadingAndOffset,
	type Actor,
	type ReadingPreview
} from './record';

/** Fields only the reading form has (correcting, the override dialog). */
const notAtForm = { correctsReadingId: '', override: false, overrideReason: '' };

/** How far ahead of the server's clock a device's measured time may be (clock drift). */
export const CLOCK_SKEW_MS = 5 * 60_000;
/** A queued reading older than this is refused: the machine has moved on; touch off again. */
export const MAX_QUEUE_AGE_MS = 7 * 86_400_000;

const when = (d: Date) => d.toISOString().replace('T', ' ').slice(0, 16) + ' UTC';

/** The reading form for this target, prefilled with what the operator typed on the device. */
export function formUrlFor(shopSlug: string, machineId: number, q: QueuedReading): string {
	const p = new URLSearchParams();
	p.set('machineZ', q.form.machineZ);
	p.set('touchedThrough', q.form.touchedThrough);
	if (q.form.blockHeight) p.set('blockHeight', q.form.blockHeight);
	if (q.form.reason) p.set('reason', q.form.reason);
	p.set('measuredAt', q.measuredAt);
	const base = `/shops/${shopSlug}/machines/${machineId}/readings`;
	if (q.kind === 'tool') {
		if (q.form.toolChanged) p.set('changed', '1');
		return `${base}/tool/${q.toolId}?${p}`;
	}
	if (q.form.withToolId) p.set('withToolId', q.form.withToolId);
	if (q.form.fixtureChanged) p.set('fixtureChanged', '1');
	return `${base}/part-top/${q.fixtureId}?${p}`;
}

const historyUrl = (
	shopSlug: string,
	machineId: number,
	preview: { registerKind: string; register: string }
) =>
	`/shops/${shopSlug}/machines/${machineId}/history/${preview.registerKind}/${encodeURIComponent(preview.register)}`;

/** The reading already recorded under this device key, if any. */
async function alreadyRecorded(trx: Knex.Transaction, machine: MachineRecord, clientKey: string) {
	return trx('readings as r')
		.leftJoin('offset_versions as o', 'o.reading_id', 'r.id')
		.where('r.client_key', clientKey)
		.first('r.id', 'r.machine_id', 'o.register_kind', 'o.register', 'o.value');
}

/** Reasons only a late reading has: things that changed between measuring and receiving. */
async function lateReasons(
	trx: Knex.Transaction,
	machine: MachineRecord,
	preview: ReadingPreview,
	measuredAt: Date,
	touchingToolH: number | null
): Promise<QueueStop[]> {
	const out: QueueStop[] = [];
	const [reference] = await listReferences(trx, machine.id);
	if (reference && new Date(reference.establishedAt) > measuredAt) {
		out.push({
			kind: 'reference-changed',
			message: `${machine.name}'s reference was re-established (version ${reference.version}, ${when(new Date(reference.establishedAt))}) after this reading was measured (${when(measuredAt)}): it was taken against the old reference. Touch off again.`
		});
	}
	const newer = await trx('offset_versions as o')
		.leftJoin('public.users as u', 'u.id', 'o.created_by')
		.where({
			'o.machine_id': machine.id,
			'o.register_kind': preview.registerKind,
			'o.register': preview.register
		})
		.where('o.created_at', '>', measuredAt)
		.orderBy('o.created_at', 'desc')
		.first('o.created_at', 'o.value', 'u.name');
	if (newer) {
		out.push({
			kind: 'newer-value',
			message: `${preview.label} was recorded again after this reading was measured (${formatWithUnits(Number(newer.value), machine.units, machine.resolution)}${newer.name ? ` by ${newer.name}` : ''}, ${when(new Date(newer.created_at))}): saving this older reading would replace a newer value.`
		});
	}
	if (touchingToolH !== null) {
		const toolChanged = await trx('offset_versions')
			.where({ machine_id: machine.id, register_kind: 'tool', register: String(touchingToolH) })
			.where('created_at', '>', measuredAt)
			.first('created_at');
		if (toolChanged) {
			out.push({
				kind: 'tool-offset-changed',
				message: `H${touchingToolH}, the length offset of the tool that touched, changed after this reading was measured (${when(new Date(toolChanged.created_at))}): ${preview.label} would be worked out from a length the tool did not have then. Touch off again.`
			});
		}
	}
	return out;
}

/**
 * Records a queued reading in the caller's shop transaction, or says why not. Input the forms
 * would refuse throws ReadingInputError (nothing written).
 */
export async function recordQueuedReading(
	trx: Knex.Transaction,
	shopSlug: string,
	machine: MachineRecord,
	q: QueuedReading,
	actor: Actor,
	now = new Date()
): Promise<QueuedReadingAnswer> {
	const formUrl = formUrlFor(shopSlug, machine.id, q);
	const existing = await alreadyRecorded(trx, machine, q.clientKey);
	if (existing) {
		if (Number(existing.machine_id) !== machine.id)
			throw ReadingInputError.of('clientKey', 'This key belongs to a reading on another machine.');
		const label = existing.register_kind === 'tool' ? `H${existing.register}` : existing.register;
		return {
			outcome: 'duplicate',
			readingId: Number(existing.id),
			label,
			value: Number(existing.value),
			valueText: formatWithUnits(Number(existing.value), machine.units, machine.resolution),
			historyUrl: historyUrl(shopSlug, machine.id, {
				registerKind: existing.register_kind,
				register: existing.register
			})
		};
	}
	const measuredAt = new Date(q.measuredAt);
	if (measuredAt.getTime() > now.getTime() + CLOCK_SKEW_MS) {
		throw ReadingInputError.of(
			'measuredAt',
			`The device says this was measured at ${when(measuredAt)}, later than now (${when(now)}): check the device's clock, then enter the reading at the form.`
		);
	}
	if (now.getTime() - measuredAt.getTime() > MAX_QUEUE_AGE_MS) {
		throw ReadingInputError.of(
			'measuredAt',
			`This reading was measured at ${when(measuredAt)}, more than 7 days ago: too old to record now. Touch off again.`
		);
	}

	const computed =
		q.kind === 'tool'
			? await previewToolReading(trx, machine, q.toolId, { ...q.form, ...notAtForm }, now)
			: await previewPartTopReading(trx, machine, q.fixtureId, { ...q.form, ...notAtForm }, now);
	const { preview } = computed;
	const touchingToolH = q.kind === 'part-top' ? (computed.parsed.tool?.h ?? null) : null;
	const reasons: QueueStop[] = [
		...(await lateReasons(trx, machine, preview, measuredAt, touchingToolH)),
		...[...preview.findings, ...preview.toolFindings]
			.filter((f) => f.severity === 'stop')
			.map((f) => ({ kind: f.kind, message: f.message }))
	];
	if (reasons.length > 0) {
		return {
			outcome: 'needs-decision',
			label: preview.label,
			value: preview.value,
			reasons,
			formUrl
		};
	}

	const p = computed.parsed;
	const reading =
		q.kind === 'tool'
			? {
					kind: q.form.toolChanged ? 'tool-remeasure' : 'tool-touch',
					tool_id: p.tool.id,
					instrument: instrumentText(q.form.touchedThrough, p.block, machine),
					tool_changed: q.form.toolChanged
				}
			: {
					kind: 'part-top',
					tool_id: p.tool.id,
					fixture_id: 'fixture' in p ? (p.fixture as { id: number }).id : null,
					instrument: `T${p.tool.t}, ${instrumentText(q.form.touchedThrough, p.block, machine)}`,
					tool_changed: q.form.fixtureChanged
				};
	const target =
		q.kind === 'tool'
			? `${machine.name} T${p.tool.t} H${p.tool.h}`
			: `${machine.name} ${preview.register}`;
	const saved = await writeReadingAndOffset(
		trx,
		machine,
		actor,
		{
			...reading,
			machine_z: p.machineZ,
			block_height: p.block,
			reference_version: p.reference.version,
			reason: q.form.reason,
			measured_at: measuredAt,
			client_key: q.clientKey
		},
		preview,
		target,
		// Stop values never get here (needs-decision above): an override is made at the form.
		{ requested: false, reason: '' }
	);
	return {
		outcome: 'saved',
		readingId: saved.readingId,
		label: preview.label,
		value: preview.value,
		valueText: formatWithUnits(preview.value, machine.units, machine.resolution),
		historyUrl: historyUrl(shopSlug, machine.id, preview)
	};
}
