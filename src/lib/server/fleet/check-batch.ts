/**
 * The shop check over many machines at once (issue 19): everything machineState and the
 * read-back findings read per machine — references, current offsets, offset history, setups
 * with their fixtures and tools, the master tool's touch, read-back verification, registers
 * in use — read for ALL the given machines in one statement each, then the pure engine per
 * machine in memory (offsets/machine-state `stateFrom`, readbacks `readbackFindingsFrom`), then
 * one upsert and one resolve for all of them (storeFindingsMany). About 12 statements for a
 * batch instead of ~15 per machine; the findings are the same as machineState + storeFindings
 * give machine by machine (tests/integration/shop-check-batch.test.ts compares them).
 */
import type { Knex } from 'knex';
import { tipZ, type Finding } from '$lib/offsets';
import {
	CURRENT_OFFSET_COLUMNS,
	currentOffsetFrom,
	engineSetupsFrom,
	historyFrom,
	historyQuery,
	referenceFrom,
	stateFrom,
	tableFrom,
	type MachineRecord,
	type SetupRows
} from '../offsets/machine-state';
import { componentFindings } from '../components/findings';
import { componentMismatches, readbackFindingsFrom } from '../readbacks/findings';
import { verificationRowFrom, verificationRows } from '../readbacks/status';
import { shopPolicy } from '../shops/settings';
import type { ResolveNote } from './check';
import { findingRows, upsertFindingRows } from './finding-rows';

/** One machine's findings as the check stores them. */
export interface MachineFindings {
	machineId: number;
	findings: Finding[];
	setupNames: Map<string, string>;
}

const byMachine = <T extends Record<string, unknown>>(rows: T[], column = 'machine_id') => {
	const out = new Map<number, T[]>();
	for (const r of rows) {
		const id = Number(r[column]);
		let list = out.get(id);
		if (!list) out.set(id, (list = []));
		list.push(r);
	}
	return out;
};

/** The engine's and the read-backs' findings of every machine given, as of `now`. */
export async function findingsOfMachines(
	trx: Knex.Transaction,
	machines: MachineRecord[],
	now: Date,
	readbackHours: number
): Promise<MachineFindings[]> {
	if (machines.length === 0) return [];
	const ids = machines.map((m) => m.id);
	// One connection per transaction: statements run one after another, never with Promise.all.
	const references = byMachine(
		await trx('reference_surfaces as r')
			.leftJoin('public.users as u', 'u.id', 'r.established_by')
			.whereIn('r.machine_id', ids)
			.orderBy([{ column: 'r.machine_id' }, { column: 'r.version', order: 'desc' }])
			.select('r.*', 'u.name as established_by_name')
	);
	const offsets = byMachine(
		await trx('current_offsets')
			.whereIn('machine_id', ids)
			.orderBy([{ column: 'register_kind' }, { column: 'register' }])
			.select('machine_id', ...CURRENT_OFFSET_COLUMNS)
	);
	// Each machine's history in its own convention (as offsetHistory reads it).
	const convention = new Map(machines.map((m) => [m.id, m.convention]));
	const history = byMachine(
		(
			(await historyQuery(trx)
				.whereIn('o.machine_id', ids)
				.select('o.machine_id', 'o.convention')) as Record<string, unknown>[]
		).filter((r) => r.convention === convention.get(Number(r.machine_id)))
	);
	const setups = byMachine(
		await trx('setups')
			.whereIn('machine_id', ids)
			.whereIn('status', ['planned', 'on-machine', 'proven'])
			.select('machine_id', 'id', 'name', 'clearance_margin')
	);
	const setupIds = [...setups.values()].flat().map((s) => s.id);
	const fixtures = setupIds.length
		? byMachine(
				await trx('setup_fixtures as sf')
					.join('fixtures as f', 'f.id', 'sf.fixture_id')
					.whereIn('sf.setup_id', setupIds)
					.select('sf.setup_id', 'f.register', 'sf.obstacle_height'),
				'setup_id'
			)
		: new Map();
	const tools = setupIds.length
		? byMachine(
				await trx('setup_tools as st')
					.join('tools as t', 't.id', 'st.tool_id')
					.whereIn('st.setup_id', setupIds)
					.select('st.setup_id', 't.h_number'),
				'setup_id'
			)
		: new Map();
	// The master tool's newest touch on the reference (clearance-setup masterTouchZOf).
	const masterIds = machines
		.filter((m) => m.convention === 'master-tool' && m.masterToolH)
		.map((m) => m.id);
	const masterTouch = new Map<number, number>();
	if (masterIds.length > 0) {
		const { rows } = await trx.raw(
			`select distinct on (r.machine_id) r.machine_id, r.machine_z, r.block_height
			from readings r
			join tools t on t.id = r.tool_id
			join machines m on m.id = r.machine_id and t.h_number = m.master_tool_h
			where r.machine_id = any(:ids) and r.kind in ('tool-touch', 'tool-remeasure', 'reference')
				and not exists (select 1 from readings c where c.corrects_reading_id = r.id)
			order by r.machine_id, r.taken_at desc, r.id desc`,
			{ ids: masterIds }
		);
		for (const r of rows)
			masterTouch.set(Number(r.machine_id), tipZ(Number(r.machine_z), Number(r.block_height)));
	}
	// Read-backs (readbacks/status machineVerification and registersInUse).
	const verification = byMachine(await verificationRows(trx, ids));
	const { rows: inUseRows } = await trx.raw(
		`select s.machine_id, 'work' as kind, f.register as register
		from setups s join setup_fixtures sf on sf.setup_id = s.id join fixtures f on f.id = sf.fixture_id
		where s.machine_id = any(:ids) and s.status in ('planned', 'on-machine', 'proven')
		union
		select s.machine_id, 'tool', t.h_number::text
		from setups s join setup_tools st on st.setup_id = s.id join tools t on t.id = st.tool_id
		where s.machine_id = any(:ids) and s.status in ('planned', 'on-machine', 'proven')`,
		{ ids }
	);
	const inUse = byMachine(inUseRows as Record<string, unknown>[]);
	const policy = await shopPolicy(trx);

	const results = machines.map((machine) => {
		const reference = (references.get(machine.id) ?? []).map(referenceFrom)[0] ?? null;
		const current = (offsets.get(machine.id) ?? []).map(currentOffsetFrom);
		const table = tableFrom(machine, current);
		const own = (setups.get(machine.id) ?? []) as SetupRows['setups'];
		const engineSetups = engineSetupsFrom(
			machine,
			table,
			{
				referenceGaugeLineZ: reference?.gaugeLineZ,
				masterTouchZ: masterTouch.get(machine.id) ?? null
			},
			{
				setups: own,
				fixtures: own.flatMap((s) => fixtures.get(Number(s.id)) ?? []),
				tools: own.flatMap((s) => tools.get(Number(s.id)) ?? [])
			}
		);
		const state = stateFrom(
			machine,
			reference,
			current,
			table,
			historyFrom(history.get(machine.id) ?? []),
			engineSetups,
			policy,
			now
		);
		const used = { work: [] as string[], tools: [] as string[] };
		for (const r of inUse.get(machine.id) ?? [])
			(r.kind === 'work' ? used.work : used.tools).push(String(r.register));
		const readback = readbackFindingsFrom(
			machine,
			(verification.get(machine.id) ?? []).map(verificationRowFrom),
			used,
			now,
			readbackHours
		);
		const setupNames = new Map<string, string>();
		for (const s of state.checkInput.setups ?? []) if (s.id && s.name) setupNames.set(s.id, s.name);
		return { machineId: machine.id, findings: [...state.findings, ...readback], setupNames };
	});

	// X/Y, radius and wear registers: read machine by machine (componentFindings and the
	// read-back mismatches beside Z), but only for the machines that have any, found in one
	// statement — most machines keep Z only, and the batch stays a dozen statements for them.
	const { rows: withComponents } = (await trx.raw(
		'select distinct machine_id from offset_component_versions where machine_id = any(:ids)',
		{ ids }
	)) as { rows: { machine_id: number | string }[] };
	const has = new Set(withComponents.map((r) => Number(r.machine_id)));
	for (const [i, machine] of machines.entries()) {
		if (!has.has(machine.id)) continue;
		results[i].findings.push(
			...(await componentMismatches(trx, machine)),
			...(await componentFindings(trx, machine, now))
		);
	}
	return results;
}

/**
 * storeFindings (./check.ts) for several machines in one upsert and one resolve, with the same
 * rules: a problem still found updates its live row; found again after it was resolved, a new
 * row linked to the resolved one (unless resolved after this check looked); a live problem no
 * longer found — not an override, last seen before this check — is resolved with `note`.
 */
export async function storeFindingsMany(
	trx: Knex.Transaction,
	machines: MachineFindings[],
	checkedAt: Date,
	note: ResolveNote
): Promise<{ opened: number; stillOpen: number; resolved: number }> {
	if (machines.length === 0) return { opened: 0, stillOpen: 0, resolved: 0 };
	// One row per key, the last one named (as storeFindings keeps it).
	const rowsIn = findingRows(machines);
	const { opened, stillOpen } = await upsertFindingRows(trx, rowsIn, checkedAt);
	const resolved = await trx('findings')
		.whereIn(
			'machine_id',
			machines.map((m) => m.machineId)
		)
		.whereNot('status', 'resolved')
		.whereNot('kind', 'override')
		.where('last_seen_at', '<', checkedAt)
		.whereRaw('not (key = any(?::text[]))', [[...rowsIn.keys()]])
		.update({
			status: 'resolved',
			resolved_by: note.by ?? null,
			resolved_at: checkedAt,
			comment: note.comment
		});
	return { opened, stillOpen, resolved };
}
