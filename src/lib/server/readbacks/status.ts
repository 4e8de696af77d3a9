/**
 * Verification at the control (issue 16): for each current offset, whether a read-back after
 * its newest version matched ("verified"), did not ("mismatched"), or none has compared it
 * since it changed ("unverified"). Read from readback_values: the newest compared row of a
 * register decides, and only when it was compared against the register's current version.
 * `trx` is always a shop transaction (withShop).
 */
import type { Knex } from 'knex';

export type Verification = 'verified' | 'mismatched' | 'unverified';

export const VERIFICATION_LABEL: Record<Verification, string> = {
	verified: 'Verified at the control',
	mismatched: 'Mismatched at the control',
	unverified: 'Not verified since it changed'
};

export interface RegisterVerification {
	kind: 'work' | 'tool';
	register: string;
	offsetVersionId: number;
	value: number;
	changedAt: string;
	state: Verification;
	/** The control's value at the newest read-back of this version (when compared). */
	controlValue: number | null;
	readbackId: number | null;
	readbackAt: string | null;
	/** The most likely cause of a mismatch (a READBACK_CAUSES code), when mismatched. */
	cause: string | null;
}

/** The newest compared read-back row of every register (a subquery; no CTE name, see the board). */
export const LAST_COMPARED_SQL = `select distinct on (v.machine_id, v.register_kind, v.register)
		v.machine_id, v.register_kind, v.register, v.status, v.offset_version_id, v.readback_id, v.value,
		v.causes
	from readback_values v
	where v.status in ('equal', 'different')
	order by v.machine_id, v.register_kind, v.register, v.readback_id desc`;

/** The state from the newest compared row and the register's current version. */
export function verificationOf(
	currentVersionId: number,
	last: { offsetVersionId: number | null; status: string | null } | null
): Verification {
	if (!last || last.offsetVersionId !== currentVersionId) return 'unverified';
	return last.status === 'equal' ? 'verified' : 'mismatched';
}

/** Every current offset of the machine with its verification. */
export async function machineVerification(
	trx: Knex.Transaction,
	machineId: number
): Promise<RegisterVerification[]> {
	return (await verificationRows(trx, [machineId])).map(verificationRowFrom);
}

/**
 * The current offsets of some machines with their newest comparison (rows for
 * verificationRowFrom), by machine, then Z registers before X/Y/radius/wear, then register.
 */
export async function verificationRows(
	trx: Knex.Transaction,
	machineIds: number[]
): Promise<Record<string, unknown>[]> {
	const { rows } = await trx.raw(
		`select c.machine_id, c.register_kind, c.register, c.offset_version_id, c.value, c.created_at,
			v.status, v.offset_version_id as compared_version, v.readback_id, v.value as control_value,
			v.causes,
			r.taken_at as readback_at
		from current_offsets c
		left join (${LAST_COMPARED_SQL}) v
			on v.machine_id = c.machine_id and v.register_kind = c.register_kind and v.register = c.register
		left join readbacks r on r.id = v.readback_id
		where c.machine_id = any(:ids)
		order by c.machine_id, c.register_kind desc, c.register`,
		{ ids: machineIds }
	);
	return rows;
}

/** A row of machineVerification's query as a RegisterVerification. */
export function verificationRowFrom(r: Record<string, unknown>): RegisterVerification {
	const offsetVersionId = Number(r.offset_version_id);
	const state = verificationOf(
		offsetVersionId,
		r.readback_id === null
			? null
			: { offsetVersionId: Number(r.compared_version), status: String(r.status) }
	);
	const compared = state !== 'unverified';
	return {
		kind: r.register_kind as 'work' | 'tool',
		register: String(r.register),
		offsetVersionId,
		value: Number(r.value),
		changedAt: new Date(r.created_at as string).toISOString(),
		state,
		controlValue: compared && r.control_value !== null ? Number(r.control_value) : null,
		readbackId: compared ? Number(r.readback_id) : null,
		readbackAt: compared && r.readback_at ? new Date(r.readback_at as string).toISOString() : null,
		cause:
			state === 'mismatched' ? ((r.causes as { kind: string }[] | null)?.[0]?.kind ?? null) : null
	};
}

/** The registers the machine's active setups use (fixtures' work offsets and tools' H numbers). */
export async function registersInUse(
	trx: Knex.Transaction,
	machineId: number
): Promise<{ work: string[]; tools: string[] }> {
	const { rows } = await trx.raw(
		`select 'work' as kind, f.register as register
		from setups s join setup_fixtures sf on sf.setup_id = s.id join fixtures f on f.id = sf.fixture_id
		where s.machine_id = :machineId and s.status in ('planned', 'on-machine', 'proven')
		union
		select 'tool', t.h_number::text
		from setups s join setup_tools st on st.setup_id = s.id join tools t on t.id = st.tool_id
		where s.machine_id = :machineId and s.status in ('planned', 'on-machine', 'proven')`,
		{ machineId }
	);
	return {
		work: rows
			.filter((r: { kind: string }) => r.kind === 'work')
			.map((r: { register: string }) => r.register),
		tools: rows
			.filter((r: { kind: string }) => r.kind === 'tool')
			.map((r: { register: string }) => r.register)
	};
}

/**
 * Per machine: registers in use by active setups (and holding an offset) that are not verified
 * at the control, and how many of those mismatched. One set-based query for the fleet board.
 */
export async function boardVerification(
	trx: Knex.Transaction
): Promise<Map<number, { inUse: number; unverified: number; mismatched: number }>> {
	const { rows } = await trx.raw(
		`select u.machine_id, count(*)::int as in_use,
			count(*) filter (where v.readback_id is null or v.offset_version_id <> c.offset_version_id)::int as unverified,
			count(*) filter (where v.offset_version_id = c.offset_version_id and v.status = 'different')::int as mismatched
		from (
			select s.machine_id, 'work' as register_kind, f.register as register
			from setups s join setup_fixtures sf on sf.setup_id = s.id join fixtures f on f.id = sf.fixture_id
			where s.status in ('planned', 'on-machine', 'proven')
			union
			select s.machine_id, 'tool', t.h_number::text
			from setups s join setup_tools st on st.setup_id = s.id join tools t on t.id = st.tool_id
			where s.status in ('planned', 'on-machine', 'proven')
		) u
		join current_offsets c
			on c.machine_id = u.machine_id and c.register_kind = u.register_kind and c.register = u.register
		left join (${LAST_COMPARED_SQL}) v
			on v.machine_id = c.machine_id and v.register_kind = c.register_kind and v.register = c.register
		group by u.machine_id`
	);
	return new Map(
		rows.map(
			(r: { machine_id: string; in_use: number; unverified: number; mismatched: number }) => [
				Number(r.machine_id),
				{ inUse: r.in_use, unverified: r.unverified, mismatched: r.mismatched }
			]
		)
	);
}
