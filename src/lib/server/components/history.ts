/**
 * The record of one component register (issue 20) — G54 X, H3 length wear, H3 radius — for its
 * history page: every version, newest first, with where the value came from (the edge reading
 * or the measured part behind it, or typed), who, when, why, what it was saved over, and the
 * register's open findings. Read-only; the rows are append-only.
 */
import type { Knex } from 'knex';
import { canonicalH, findingTitle, formatWithUnits } from '$lib/offsets';
import { TOOL_COMPONENTS } from '$lib/schemas/components';
import { iso } from '../db/convert';
import { componentLabel, type ComponentKind } from './store';

const WORK_COMPONENTS = ['x', 'y'] as const;

/** The page's params, checked: null when they name no component register. */
export function componentFromParams(
	kind: string,
	register: string,
	component: string
): { kind: 'work' | 'tool'; register: string; component: ComponentKind } | null {
	if (kind === 'work') {
		const r = register.trim().toUpperCase();
		if (!/^G5[4-9]$|^G54\.1 P([1-9]|[1-3][0-9]|4[0-8])$/.test(r)) return null;
		return (WORK_COMPONENTS as readonly string[]).includes(component)
			? { kind, register: r, component: component as ComponentKind }
			: null;
	}
	if (kind === 'tool') {
		const h = canonicalH(register.replace(/^[HhDd]/, ''));
		if (h === null) return null;
		return (TOOL_COMPONENTS as readonly string[]).includes(component)
			? { kind, register: h, component: component as ComponentKind }
			: null;
	}
	return null;
}

export interface ComponentRecordRow {
	id: number;
	value: number;
	/** Change from the version before (null for the first). */
	delta: number | null;
	units: 'inch' | 'mm';
	source: 'edge' | 'part' | 'entered' | 'presetter';
	/** What the source says, in words ("touched moving +X at 1.2000, probe 0.2000"). */
	detail: string;
	by: string | null;
	at: string;
	reason: string;
	/** Saved over these Stop findings (plain titles), with the reason given; empty otherwise. */
	overTitles: string[];
	overrideReason: string;
}

export interface ComponentFinding {
	kind: string;
	title: string;
	severity: 'stop' | 'caution';
	status: 'open' | 'acknowledged';
	message: string;
	firstSeenAt: string;
}

const side = (axis: string, s: string | null) =>
	s === 'minus' ? `moving +${axis}` : s === 'plus' ? `moving −${axis}` : '';

export async function componentRecord(
	trx: Knex.Transaction,
	machineId: number,
	kind: 'work' | 'tool',
	register: string,
	component: ComponentKind,
	limit = 200
): Promise<{ label: string; rows: ComponentRecordRow[]; findings: ComponentFinding[] }> {
	const label = componentLabel(kind, register, component);
	const versions = await trx('offset_component_versions as v')
		.leftJoin('public.users as u', 'u.id', 'v.created_by')
		.leftJoin('edge_readings as e', 'e.id', 'v.edge_reading_id')
		.leftJoin('part_measurements as p', 'p.id', 'v.part_measurement_id')
		.leftJoin('assembly_measurements as am', 'am.id', 'v.presetter_measurement_id')
		.leftJoin('tool_assemblies as ta', 'ta.id', 'am.assembly_id')
		.where({
			'v.machine_id': machineId,
			'v.register_kind': kind,
			'v.register': register,
			'v.component': component
		})
		.orderBy([
			{ column: 'v.created_at', order: 'desc' },
			{ column: 'v.id', order: 'desc' }
		])
		.limit(limit)
		.select(
			'v.id',
			'v.value',
			'v.units',
			'v.source',
			'v.reason',
			'v.override_reason',
			'v.overridden_findings',
			'v.created_at',
			'u.name as by_name',
			'e.axis',
			'e.datum',
			'e.feature as edge_feature',
			'e.first_coordinate',
			'e.first_side',
			'e.second_coordinate',
			'e.second_side',
			'e.probe_diameter',
			'e.instrument',
			'p.feature as part_feature',
			'p.nominal',
			'p.measured',
			'p.change',
			'p.explanation',
			'ta.name as assembly_name',
			'am.radius as preset_radius',
			'am.units as preset_units',
			'am.presetter',
			'am.measured_at as preset_at'
		);
	const findings = await trx('findings')
		.where({ machine_id: machineId, subject: label })
		.whereNot('status', 'resolved')
		.orderBy([{ column: 'severity', order: 'desc' }, { column: 'first_seen_at' }])
		.select('kind', 'severity', 'status', 'message', 'first_seen_at');
	const n = (v: unknown) => Number(v);
	const rows: ComponentRecordRow[] = versions.map((r, i) => {
		const older = versions[i + 1];
		let detail = '';
		const len = (v: unknown) => formatWithUnits(n(v), r.units);
		if (r.source === 'edge' && r.axis) {
			const first = `${len(r.first_coordinate)} ${side(r.axis, r.first_side)}`.trim();
			detail =
				r.second_coordinate === null
					? `edge touched at ${first}, probe ⌀${len(r.probe_diameter)}`
					: `centre of ${r.edge_feature === 'inside' ? 'a bore or slot' : 'a boss or block'}: ${first} and ${len(r.second_coordinate)} ${side(r.axis, r.second_side)}, probe ⌀${len(r.probe_diameter)}`;
			if (r.instrument) detail += ` (${r.instrument})`;
		} else if (r.source === 'part' && r.part_feature) {
			detail = `${r.part_feature} measured ${len(r.measured)} for ${len(r.nominal)}: wear change ${len(r.change)}`;
		} else if (r.source === 'presetter' && r.assembly_name) {
			detail = `assembly ${r.assembly_name}, radius ${formatWithUnits(n(r.preset_radius), r.preset_units)}${r.presetter ? ` on ${r.presetter}` : ''}, measured ${iso(r.preset_at).slice(0, 10)}`;
		}
		return {
			id: n(r.id),
			value: n(r.value),
			delta: older ? Math.round((n(r.value) - n(older.value)) * 1e4) / 1e4 : null,
			units: r.units,
			source: r.source,
			detail,
			by: r.by_name ?? null,
			at: iso(r.created_at),
			reason: String(r.reason ?? ''),
			overTitles: ((r.overridden_findings ?? []) as string[]).map(findingTitle),
			overrideReason: String(r.override_reason ?? '')
		};
	});
	return {
		label,
		rows,
		findings: findings.map((f) => ({
			kind: String(f.kind),
			title: findingTitle(String(f.kind)),
			severity: f.severity,
			status: f.status,
			message: String(f.message),
			firstSeenAt: iso(f.first_seen_at)
		}))
	};
}
