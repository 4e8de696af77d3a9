import type { Knex } from 'knex';
import { iso } from '../db/convert';
import { DEFAULT_POLICY, findingTitle } from '$lib/offsets';
import type { FleetBoard, FleetMachine, Health, LastCheck } from '$lib/fleet';
import { boardVerification } from '../readbacks/status';

/**
 * The fleet board's data for one shop in a fixed number of set-based queries, however many
 * machines, tools and readings the shop has (no query per machine):
 *   1. machines with their newest reference, newest reading (`machines.last_reading_at`),
 *      current setup and their registers counted from `current_offsets` (the newest version of
 *      every register, kept by a trigger): how many, how many measured before the reference was
 *      re-set, how many past their age — one statement of hash joins over whole tables (a
 *      LATERAL per machine re-scanned the small tables 200 times: 10 ms against 4 ms);
 *   2. unresolved findings counted per machine, severity and status;
 *   3. registers in use by active setups not verified at the control (readbacks/status.ts);
 *   4. the newest background check.
 * `trx` must be a shop transaction (withShop).
 *
 * Health is the worst of the stored findings (from the last background check) and what the
 * data says right now about staleness, so a reference re-set this morning shows as Stale on the
 * board before the nightly check has run.
 */
export async function fleetBoard(
	trx: Knex.Transaction,
	now = new Date(),
	/** The shop's own age limits (settings; see boardAges), else the engine's defaults. */
	ages: { toolDays?: number; workDays?: number } = {}
): Promise<FleetBoard> {
	const toolDays = ages.toolDays ?? DEFAULT_POLICY.inch.toolMaxAgeDays;
	const workDays = ages.workDays ?? DEFAULT_POLICY.inch.workMaxAgeDays;
	const machines = await trx.raw(
		`with ref as (
			select distinct on (machine_id) machine_id, version, established_at
			from reference_surfaces order by machine_id, version desc
		)
		select m.id, m.name, m.units, m.last_reading_at,
			ref.version as reference_version, ref.established_at as reference_at,
			st.id as setup_id, st.name as setup_name, st.status as setup_status,
			coalesce(o.registers, 0) as registers, coalesce(o.stale_reference, 0) as stale_reference,
			coalesce(o.stale_age, 0) as stale_age
		from machines m
		left join ref on ref.machine_id = m.id
		left join (
			select distinct on (machine_id) machine_id, id, name, status from setups
			where status in ('on-machine', 'proven', 'planned')
			order by machine_id, case status when 'on-machine' then 0 when 'proven' then 1 else 2 end,
				created_at desc
		) st on st.machine_id = m.id
		left join (
			select c.machine_id, count(*)::int as registers,
				count(*) filter (where c.created_at < r.established_at)::int as stale_reference,
				count(*) filter (where
					(c.register_kind = 'tool' and c.created_at < cast(:now as timestamptz) - make_interval(days => :toolDays))
					or (c.register_kind = 'work' and c.created_at < cast(:now as timestamptz) - make_interval(days => :workDays))
				)::int as stale_age
			from current_offsets c left join ref r on r.machine_id = c.machine_id
			group by c.machine_id
		) o on o.machine_id = m.id
		where m.archived_at is null
		order by m.name`,
		{ now: now.toISOString(), toolDays, workDays }
	);

	const findings = await trx.raw(
		`select machine_id, severity, status, (kind like 'stale-%') as stale, count(*)::int as n,
			array_agg(distinct kind order by kind) as kinds
		from findings where status <> 'resolved'
		group by machine_id, severity, status, (kind like 'stale-%')`
	);

	// Overrides: values saved over a Stop, still current (their finding is unresolved).
	const overrides = await trx('findings')
		.where({ kind: 'override' })
		.whereNot('status', 'resolved')
		.orderBy('first_seen_at')
		.select('machine_id', 'subject', 'message');
	const atControl = await boardVerification(trx);

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

	const counts = new Map<
		number,
		{ stop: number; caution: number; acknowledged: number; staleFindings: number; stopAny: number }
	>();
	const stopTitles = new Map<number, string[]>();
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
		if (f.severity === 'stop') {
			c.stopAny += f.n;
			// What the Stops are, in plain titles (finding-titles.ts), for the reason line.
			const titles = stopTitles.get(id) ?? [];
			for (const k of f.kinds as string[]) titles.push(findingTitle(k));
			stopTitles.set(id, [...new Set(titles)].sort());
		}
		if (f.stale) c.staleFindings += f.n;
		counts.set(id, c);
	}

	const rows: FleetMachine[] = machines.rows.map((m: Record<string, unknown>) => {
		const id = Number(m.id);
		const o = {
			registers: Number(m.registers),
			staleReference: Number(m.stale_reference),
			staleAge: Number(m.stale_age)
		};
		const c = counts.get(id) ?? {
			stop: 0,
			caution: 0,
			acknowledged: 0,
			staleFindings: 0,
			stopAny: 0
		};
		const { health, reason } = healthOf(m.reference_version !== null, o, c, stopTitles.get(id));
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
			referenceVersion: m.reference_version === null ? null : Number(m.reference_version),
			overrides: overrides
				.filter((o) => Number(o.machine_id) === id)
				.map((o) => ({ subject: String(o.subject), message: String(o.message) })),
			atControl: atControl.get(id) ?? { inUse: 0, unverified: 0, mismatched: 0 }
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

const plural = (n: number, one: string, many = `${one}s`) => `${n} ${n === 1 ? one : many}`;

/** Worst first: Not measured, Stop, Stale, Caution, OK — with a short reason in plain words. */
export function healthOf(
	hasReference: boolean,
	o: { registers: number; staleReference: number; staleAge: number },
	c: {
		stop: number;
		caution: number;
		acknowledged: number;
		staleFindings: number;
		stopAny: number;
	},
	/** Plain titles of the Stop findings' kinds, named after the count. */
	stopTitles: string[] = []
): { health: Health; reason: string } {
	if (!hasReference) return { health: 'unset', reason: 'No reference recorded' };
	if (o.registers === 0) return { health: 'unset', reason: 'No offsets measured yet' };
	if (c.stopAny > 0)
		return {
			health: 'stop',
			reason:
				plural(c.stopAny, 'stop finding') + (stopTitles.length ? `: ${stopTitles.join('; ')}` : '')
		};
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
