/**
 * Where an assembly is (issue 20): one assembly is in one pocket at a time. Assigning it to a
 * pocket ends its earlier assignments (it moved: same measured length, another place), and a
 * pocket that gets another assembly ends the one it held (replaced). Ends are append-only rows of
 * `assembly_assignment_ends`; an assignment without one is where the assembly is now. The tool
 * left behind in the old pocket stays in that machine's rack with its last H until someone
 * archives it or measures what is there now: only the library's link to it ends.
 */
import type { Knex } from 'knex';
import { iso } from '../db/convert';

/** Ends every other live assignment of this assembly, and of this pocket. Returns how many. */
export async function endEarlierAssignments(
	trx: Knex.Transaction,
	next: { assignmentId: number; assemblyId: number; toolId: number },
	by: number | null,
	at?: Date
): Promise<number> {
	const { rows } = await trx.raw(
		`insert into assembly_assignment_ends (assignment_id, replaced_by, reason, ended_by, ended_at)
		select s.id, :next, case when s.assembly_id = :assembly then 'moved' else 'replaced' end,
			:by, coalesce(cast(:at as timestamptz), now())
		from assembly_assignments s
		where s.id <> :next
			and (s.assembly_id = :assembly or s.tool_id = :tool)
			and not exists (select 1 from assembly_assignment_ends e where e.assignment_id = s.id)
		returning id`,
		{
			next: next.assignmentId,
			assembly: next.assemblyId,
			tool: next.toolId,
			by,
			at: at ? at.toISOString() : null
		}
	);
	return rows.length;
}

/** A machine's tools that hold a library assembly now: tool id → the assembly. */
export interface LibraryTool {
	assemblyId: number;
	name: string;
	assignedAt: string;
}

export async function libraryToolsOf(
	trx: Knex.Transaction,
	machineId: number
): Promise<Map<number, LibraryTool>> {
	const rows = await trx('assembly_assignments as s')
		.join('tool_assemblies as a', 'a.id', 's.assembly_id')
		.where('s.machine_id', machineId)
		.whereNotExists((q) =>
			q.select(1).from('assembly_assignment_ends as e').whereRaw('e.assignment_id = s.id')
		)
		.select('s.tool_id', 's.assembly_id', 'a.name', 's.assigned_at');
	return new Map(
		rows.map((r) => [
			Number(r.tool_id),
			{ assemblyId: Number(r.assembly_id), name: String(r.name), assignedAt: iso(r.assigned_at) }
		])
	);
}
