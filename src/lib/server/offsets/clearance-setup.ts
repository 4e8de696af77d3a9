import type { Knex } from 'knex';
import { tipZ, zeroHeightFromWorkOffset, type Setup, type ZeroHeightGeometry } from '$lib/offsets';
import type { MachineRecord } from './machine-state';

/**
 * The one builder of the engine's clearance-plane input (`Setup`), used by the offset checks
 * (machine-state), the setup page and sheet (setups/queries) and the program check
 * (programs/input), so all of them work out the same planes:
 * - every fixture of the setup is an obstacle (its tallest thing above the reference), whether
 *   or not its own offset is measured: an unmeasured fixture is still on the table;
 * - planes are given for the fixtures whose program-zero height h_k is known (docs/OFFSETS.md §8).
 */

/** What besides the work offset h_k needs, per convention (the engine's ZeroHeightGeometry). */
export type ClearanceGeometry = ZeroHeightGeometry;

/** A fixture of a setup as the builder needs it. */
export interface ClearanceFixture {
	register: string;
	/** The fixture's current work offset Z, null when never measured. */
	workOffset: number | null;
	/** Tallest thing on the fixture above the reference. */
	obstacleHeight: number;
}

/**
 * h_k (program zero above the reference) from a work offset: the engine's
 * zeroHeightFromWorkOffset for this machine's convention. Null when the value it needs (R, or
 * R + L_m) is not known.
 */
export function zeroHeightFor(
	machine: Pick<MachineRecord, 'convention'>,
	workZ: number,
	g: ClearanceGeometry
): number | null {
	return zeroHeightFromWorkOffset(machine.convention, workZ, g);
}

/** The engine's Setup for clearance planes, or null when no fixture's h_k is known. */
export function clearanceSetup(
	machine: Pick<MachineRecord, 'convention' | 'units' | 'resolution'>,
	margin: number,
	fixtures: ClearanceFixture[],
	geometry: ClearanceGeometry,
	extra: { id?: string; name?: string; tools?: { h: string }[] } = {}
): Setup | null {
	const usable = fixtures
		.map((f) => ({
			register: f.register,
			zeroHeight: f.workOffset === null ? null : zeroHeightFor(machine, f.workOffset, geometry)
		}))
		.filter((f): f is { register: string; zeroHeight: number } => f.zeroHeight !== null);
	if (usable.length === 0) return null;
	return {
		...(extra.id ? { id: extra.id } : {}),
		...(extra.name ? { name: extra.name } : {}),
		units: machine.units,
		resolution: machine.resolution,
		margin,
		fixtures: usable,
		obstacles: fixtures.map((f) => ({ label: f.register, height: f.obstacleHeight })),
		...(extra.tools ? { tools: extra.tools } : {})
	};
}

/**
 * R + L_m: the master tool's newest touch on the reference (machine Z minus any block), for
 * the master-tool convention; null for other conventions or before the master is touched off.
 */
export async function masterTouchZOf(
	trx: Knex.Transaction,
	machine: Pick<MachineRecord, 'id' | 'convention' | 'masterToolH'>
): Promise<number | null> {
	if (machine.convention !== 'master-tool' || !machine.masterToolH) return null;
	const r = await trx('readings as r')
		.join('tools as t', 't.id', 'r.tool_id')
		.where({ 'r.machine_id': machine.id, 't.h_number': machine.masterToolH })
		.whereIn('r.kind', ['tool-touch', 'tool-remeasure', 'reference'])
		.whereRaw('not exists (select 1 from readings c where c.corrects_reading_id = r.id)')
		.orderBy([
			{ column: 'r.taken_at', order: 'desc' },
			{ column: 'r.id', order: 'desc' }
		])
		.first('r.machine_z', 'r.block_height');
	return r ? tipZ(Number(r.machine_z), Number(r.block_height)) : null;
}
