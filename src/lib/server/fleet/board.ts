import type { Knex } from 'knex';
import { DEFAULT_POLICY } from '$lib/offsets';
import type { FleetBoard, FleetMachine, Health, LastCheck } from '$lib/fleet';

/**
 * The fleet board's data for one shop in a fixed number of set-based queries, however many
 * machines, tools and readings the shop has (no query per machine):
 *   1. machines with their newest reference, newest reading and current setup (LATERAL joins);
 *   2. the newest offset version of every register in the shop (DISTINCT ON), folded per
 *      machine into counts of offsets measured before the reference was re-set or past their age;
 *   3. unresolved findings counted per machine, severity and status;
 *   4. the newest background check.
 * `trx` must be a shop transaction (withShop).
 *
 * Health is the worst of the stored findings (from the last background check) and what the
 * data says right now about staleness, so a reference re-set this morning shows as Stale on the
 * board before the nightly check has run.
 */
export async function fleetBoard(trx: Knex.Transaction, now = new Date()): Promise<FleetBoard> {
	const machines = await trx.raw(
		`select m.id, m.name, m.units,
			ref.version as reference_version, ref.established_at as reference_at,
			rd.taken_at as last_reading_at,
			st.id as setup_id, st.name as setup_name, st.status as setup_status
		from machines m
		left join lateral (
			select version, established_at from reference_surfaces rs
			where rs.machine_id = m.id order by version desc limit 1
		) ref on true
		left join lateral (
			select taken_at from readings r
			where r.machine_id = m.id order by taken_at desc limit 1
		) rd on true
		left join lateral (
			select id, name, status from setups s
			where s.machine_id = m.id and s.status in ('on-machine', 'proven', 'planned')
			order by case s.status when 'on-machine' then 0 when 'proven' then 1 else 2 end,
				s.created_at desc
			limit 1
		) st on true
		where m.archived_at is null
		order by m.name`
	);

	// Engine defaults (shop policy, src/lib/offsets/policy.ts): the same ages the check uses.
	const toolDays = DEFAULT_POLICY.inch.toolMaxAgeDays;
	const workDays = DEFAULT_POLICY.inch.workMaxAgeDays;
	const offsets = await trx.raw(
		`with latest as (
			select distinct on (o.machine_id, o.register_kind, o.register)
				o.machine_id, o.register_kind, o.created_at
			from offset_versions o
			join machines m on m.id = o.machine_id and m.archived_at is null
			order by o.machine_id, o.register_kind, o.register, o.created_at desc, o.id desc
		), refs as (
			select distinct on (machine_id) machine_id, established_at
			from reference_surfaces order by machine_id, version desc
		)
		select l.machine_id,
			count(*)::int as registers,
			count(*) filter (where refs.established_at is not null
				and l.created_at < refs.established_at)::int as stale_reference,
			count(*) filter (where
				(l.register_kind = 'tool' and l.created_at < cast(:now as timestamptz) - make_interval(days => :toolDays))
				or (l.register_kind = 'work' and l.created_at < cast(:now as timestamptz) - make_interval(days => :workDays))
			)::int as stale_age,
			max(l.created_at) as newest_offset_at
		from latest l left join refs on refs.machine_id = l.machine_id
		group by l.machine_id`,
		{ now: now.toISOString(), toolDays, workDays }
	);

	const findings = await trx.raw(
		`select machine_id, severity, status, (kind like 'stale-%') as stale, count(*)::int as n
		from findings where status <> 'resolved'
		group by machine_id, severity, status, (kind like 'stale-%')`
	);

	const [run] = await trx('check_runs')
		.orderBy('started_at', 'desc')
		.limit(1)
		.select(
			'job_id',
			'trigger',
			'status',
			'checked_at',
			'finished_at',
			'opened',
			'still_open',
			'resolved',
			'machines'
		);

	const byMachine = new Map<
		number,
		{ registers: number; staleReference: number; staleAge: number }
	>();
	for (const r of offsets.rows)
		byMachine.set(Number(r.machine_id), {
			registers: r.registers,
			staleReference: r.stale_reference,
			staleAge: r.stale_age
		});
	const counts = new Map<
		number,
		{ stop: number; caution: number; acknowledged: number; staleFindings: number; stopAny: number }
	>();
	for (const f of findings.rows) {
		const id = Number(f.machine_id);
		const c = counts.get(id) ?? {
			stop: 0,
			caution: 0,
			acknowledged: 0,
			staleFindings: 0,
			stopAny: 0
		};
		if (f.status === 'open') c[f.severity as 'stop' | 'caution'] += f.n;
		else c.acknowledged += f.n;
		if (f.severity === 'stop') c.stopAny += f.n;
		if (f.stale) c.staleFindings += f.n;
		counts.set(id, c);
	}

	const rows: FleetMachine[] = machines.rows.map((m: Record<string, unknown>) => {
		const id = Number(m.id);
		const o = byMachine.get(id) ?? { registers: 0, staleReference: 0, staleAge: 0 };
		const c = counts.get(id) ?? {
			stop: 0,
			caution: 0,
			acknowledged: 0,
			staleFindings: 0,
			stopAny: 0
		};
		const { health, reason } = healthOf(m.reference_version !== null, o, c);
		return {
			id,
			name: String(m.name),
			units: m.units as 'inch' | 'mm',
			health,
			reason,
			setup: m.setup_id
				? { id: Number(m.setup_id), name: String(m.setup_name), status: String(m.setup_status) }
				: null,
			findings: { stop: c.stop, caution: c.caution, acknowledged: c.acknowledged },
			registers: o.registers,
			staleReference: o.staleReference,
			staleAge: o.staleAge,
			lastReadingAt: m.last_reading_at ? iso(m.last_reading_at) : null,
			referenceAt: m.reference_at ? iso(m.reference_at) : null,
			referenceVersion: m.reference_version === null ? null : Number(m.reference_version)
		};
	});

	const lastCheck: LastCheck | null = run
		? {
				jobId: run.job_id,
				trigger: run.trigger,
				status: run.status,
				checkedAt: iso(run.checked_at),
				finishedAt: run.finished_at ? iso(run.finished_at) : null,
				opened: run.opened,
				stillOpen: run.still_open,
				resolved: run.resolved,
				machines: run.machines
			}
		: null;
	return { machines: rows, lastCheck, generatedAt: now.toISOString() };
}

const iso = (v: unknown) => new Date(v as string).toISOString();
const plural = (n: number, one: string, many = `${one}s`) => `${n} ${n === 1 ? one : many}`;

/** Worst first: Not measured, Stop, Stale, Caution, OK — with a short reason in plain words. */
export function healthOf(
	hasReference: boolean,
	o: { registers: number; staleReference: number; staleAge: number },
	c: { stop: number; caution: number; acknowledged: number; staleFindings: number; stopAny: number }
): { health: Health; reason: string } {
	if (!hasReference) return { health: 'unset', reason: 'No reference recorded' };
	if (o.registers === 0) return { health: 'unset', reason: 'No offsets measured yet' };
	if (c.stopAny > 0) return { health: 'stop', reason: plural(c.stopAny, 'stop finding') };
	if (o.staleReference > 0)
		return {
			health: 'stale',
			reason: `${plural(o.staleReference, 'offset')} measured before the reference was re-set`
		};
	if (o.staleAge > 0)
		return { health: 'stale', reason: `${plural(o.staleAge, 'offset')} past the age limit` };
	if (c.staleFindings > 0)
		return { health: 'stale', reason: plural(c.staleFindings, 'stale finding') };
	const cautions = c.caution + c.acknowledged;
	if (cautions > 0)
		return { health: 'caution', reason: plural(cautions, 'finding') + ' to look at' };
	return { health: 'ok', reason: 'Nothing found' };
}
