/**
 * X and Y of a work offset from edge readings (issue 20), on the server: reads what the operator
 * typed with the machine's units, asks the engine for the edge or centre (`edgePosition`,
 * `centreFromEdges`) and its findings against the last value (`checkEdgeValue`), and records the
 * edge reading with its component version in the caller's shop transaction.
 */
import type { Knex } from 'knex';
import {
	canonicalRegister,
	centreFromEdges,
	checkEdgeValue,
	edgePosition,
	isOffsetInputError,
	resolvePolicy,
	type ApproachSide
} from '$lib/offsets';
import type { EdgeReadingForm } from '$lib/schemas/components';
import { shopPolicy } from '../shops/settings';
import type { MachineRecord } from '../offsets/machine-state';
import { parseLength, ReadingInputError, type ReadingIssue } from '../readings/input';
import type { Actor } from '$lib/server/actor';
import type { BriefFinding } from '$lib/reading-preview';
import { gateComponent, writeComponentVersion } from './store';

/** What the page shows before (and after) saving. */
export interface EdgePreview {
	register: string;
	axis: 'X' | 'Y';
	label: string;
	value: number;
	previous: number | null;
	working: string;
	findings: BriefFinding[];
	/** For a centre: the two edges and the feature's size along the axis. */
	width: number | null;
}

/** Maps the engine's field names onto the form's. */
const FIELD: Record<string, string> = {
	probeDiameter: 'probeDiameter',
	'touch.machineCoordinate': 'firstCoordinate',
	'first.machineCoordinate': 'firstCoordinate',
	'second.machineCoordinate': 'secondCoordinate',
	'first.approachedFrom': 'firstSide',
	'second.approachedFrom': 'secondSide',
	'touch.approachedFrom': 'firstSide',
	feature: 'feature'
};

export async function previewEdgeReading(
	trx: Knex.Transaction,
	machine: MachineRecord,
	form: EdgeReadingForm
): Promise<EdgePreview> {
	const issues: ReadingIssue[] = [];
	const register = canonicalRegister(form.register);
	if (!register)
		issues.push({
			field: 'register',
			message: `"${form.register}" is not a work offset Datumkeep keeps (G54–G59, G54.1 P1–P48).`
		});
	const probe = parseLength(
		machine,
		'probeDiameter',
		'Probe diameter',
		form.probeDiameter,
		issues,
		{
			nonNegative: true
		}
	);
	if (probe === undefined && !issues.some((i) => i.field === 'probeDiameter'))
		issues.push({
			field: 'probeDiameter',
			message: `Probe diameter is required: the edge is one radius from the reading (e.g. ${machine.units === 'inch' ? '0.2000 in' : '6.000 mm'} for a common edge finder tip).`
		});
	const first = parseLength(
		machine,
		'firstCoordinate',
		`Machine ${form.axis}`,
		form.firstCoordinate,
		issues,
		{
			required: true
		}
	);
	const second =
		form.datum === 'centre'
			? parseLength(
					machine,
					'secondCoordinate',
					`Second machine ${form.axis}`,
					form.secondCoordinate,
					issues,
					{ required: true }
				)
			: undefined;
	if (issues.length > 0) throw new ReadingInputError(issues);

	let value: number;
	let width: number | null = null;
	const u = machine.units === 'inch' ? 'in' : 'mm';
	let working: string;
	try {
		if (form.datum === 'centre') {
			const c = centreFromEdges({
				units: machine.units,
				resolution: machine.resolution,
				axis: form.axis,
				feature: form.feature,
				first: { machineCoordinate: first!, approachedFrom: form.firstSide },
				second: { machineCoordinate: second!, approachedFrom: form.secondSide },
				probeDiameter: probe
			});
			value = c.centre;
			width = c.width;
			working = `edges at ${c.lowEdge} and ${c.highEdge} ${u} (each reading ± half of ${probe} ${u}); centre = their mean`;
		} else {
			value = edgePosition({
				units: machine.units,
				resolution: machine.resolution,
				touch: { machineCoordinate: first!, approachedFrom: form.firstSide },
				probeDiameter: probe
			});
			working = `${first} ${form.firstSide === 'minus' ? '+' : '−'} ${probe! / 2} ${u} (half the probe diameter, approached from the ${form.axis}${form.firstSide === 'minus' ? '−' : '+'} side)`;
		}
	} catch (e) {
		if (!isOffsetInputError(e)) throw e;
		throw new ReadingInputError(
			e.issues.map((i) => ({ field: FIELD[i.field] ?? '', message: i.message }))
		);
	}

	const last = await trx('edge_readings')
		.where({ machine_id: machine.id, register: register!, axis: form.axis })
		.orderBy([
			{ column: 'taken_at', order: 'desc' },
			{ column: 'id', order: 'desc' }
		])
		.first('position', 'datum', 'first_side');
	const previous = last
		? {
				value: Number(last.position),
				...(last.datum === 'edge' ? { side: last.first_side as ApproachSide } : {})
			}
		: null;
	const policy = resolvePolicy(await shopPolicy(trx), machine.units);
	const findings = checkEdgeValue({
		units: machine.units,
		resolution: machine.resolution,
		policy,
		register: register!,
		axis: form.axis,
		value,
		...(form.datum === 'edge' ? { side: form.firstSide } : {}),
		probeDiameter: probe!,
		previous
	}).map((f) => ({ kind: f.kind, severity: f.severity, message: f.message }));
	return {
		register: register!,
		axis: form.axis,
		label: `${register} ${form.axis}`,
		value,
		previous: previous?.value ?? null,
		working,
		findings,
		width
	};
}

/** Records the edge reading and the new X or Y version; nothing is written when refused. */
export async function recordEdgeReading(
	trx: Knex.Transaction,
	machine: MachineRecord,
	form: EdgeReadingForm,
	actor: Actor
): Promise<{ edgeReadingId: number; versionId: number; preview: EdgePreview }> {
	const preview = await previewEdgeReading(trx, machine, form);
	const overridden = gateComponent(machine, preview.label, preview.value, preview.findings, {
		requested: form.override,
		reason: form.overrideReason
	});
	const centre = form.datum === 'centre';
	const [row] = await trx('edge_readings')
		.insert({
			machine_id: machine.id,
			register: preview.register,
			axis: form.axis,
			datum: form.datum,
			feature: centre ? form.feature : null,
			first_coordinate: Number(form.firstCoordinate),
			first_side: form.firstSide,
			second_coordinate: centre ? Number(form.secondCoordinate) : null,
			second_side: centre ? form.secondSide : null,
			probe_diameter: Number(form.probeDiameter),
			position: preview.value,
			units: machine.units,
			instrument: form.instrument,
			reason: form.reason,
			taken_by: actor.id,
			...(overridden
				? {
						override_reason: form.overrideReason.trim(),
						overridden_findings: [...new Set(overridden.map((f) => f.kind))]
					}
				: {})
		})
		.returning('id');
	const edgeReadingId = Number(row.id);
	const versionId = await writeComponentVersion(trx, machine, actor, {
		kind: 'work',
		register: preview.register,
		component: form.axis === 'X' ? 'x' : 'y',
		value: preview.value,
		source: 'edge',
		edgeReadingId,
		reason: form.reason,
		overridden,
		overrideReason: form.overrideReason
	});
	return { edgeReadingId, versionId, preview };
}
