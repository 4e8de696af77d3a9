/**
 * What the operator typed at a reading form, read into lengths with the machine in hand, and
 * every refusal as a form field and a sentence (ReadingInputError). Nothing here touches the
 * database: lookups are in ./lookups, the offset and its findings in ./preview.
 */
import {
	decimalsFor,
	describeSlip,
	formatWithUnits,
	isOffsetInputError,
	slipsIntoRange
} from '$lib/offsets';
import { numberTextMessage, readNumberText } from '$lib/offsets/number-text';
import { LENGTH_PLACES } from '$lib/schemas/number';
import type { TouchThrough } from '$lib/schemas/readings';
import type { MachineRecord, ReferenceRecord } from '../offsets/machine-state';

/** One reason the input was refused: the form field and a sentence saying why. */
export interface ReadingIssue {
	field: string;
	message: string;
}

/** Thrown for input that cannot be recorded; nothing has been written when it is. */
export class ReadingInputError extends Error {
	constructor(readonly issues: ReadingIssue[]) {
		super(issues.map((i) => `${i.field}: ${i.message}`).join('; '));
		this.name = 'ReadingInputError';
	}
	static of(field: string, message: string) {
		return new ReadingInputError([{ field, message }]);
	}
}

/** A length with the machine's units and increment: "-14.7502 in". */
export const fmtOf = (m: MachineRecord) => (v: number) => formatWithUnits(v, m.units, m.resolution);

/**
 * A length as typed, read by the app's one strict number reader (`readNumberText`: a point for
 * decimals, no comma, no unit, no trailing text), with no more decimals than the control shows
 * and no more than the database keeps. Collects issues instead of throwing.
 */
export function parseLength(
	machine: MachineRecord,
	field: string,
	label: string,
	raw: string,
	issues: ReadingIssue[],
	opts: { required?: boolean; nonNegative?: boolean } = {}
): number | undefined {
	const read = readNumberText(raw);
	if (!read.ok && read.empty) {
		if (opts.required) issues.push({ field, message: `${label} is required.` });
		return undefined;
	}
	const u = machine.units === 'inch' ? 'in' : 'mm';
	if (!read.ok) {
		issues.push({
			field,
			message: numberTextMessage(label, raw, read.reason, {
				example: machine.units === 'inch' ? '-14.7502 in' : '-289.835 mm'
			})
		});
		return undefined;
	}
	const places = read.places;
	const allowed = Math.min(decimalsFor(machine.resolution), LENGTH_PLACES);
	if (places > allowed) {
		issues.push({
			field,
			message: `${label} has ${places} decimals; ${machine.name} reads to ${formatWithUnits(machine.resolution, machine.units, machine.resolution)}, so type at most ${allowed}.`
		});
		return undefined;
	}
	const v = read.value;
	if (opts.nonNegative && v < 0) {
		issues.push({ field, message: `${label} cannot be negative (got ${v} ${u}).` });
		return undefined;
	}
	return v;
}

/** The block height and instrument must agree: "directly" means no block; a block has a height. */
function blockFrom(
	machine: MachineRecord,
	through: TouchThrough,
	raw: string,
	issues: ReadingIssue[]
): number {
	const before = issues.length;
	const h = parseLength(machine, 'blockHeight', 'Block height', raw, issues, { nonNegative: true });
	if (issues.length > before) return 0;
	if (through === 'directly') {
		if (h !== undefined && h !== 0) {
			issues.push({
				field: 'blockHeight',
				message: `You chose "directly" but gave a block height of ${raw}: choose what the tip touched, or clear the height.`
			});
		}
		return 0;
	}
	if (h === undefined || h === 0) {
		issues.push({
			field: 'blockHeight',
			message: `Give the height of the ${through} the tip touched (it is subtracted from the reading).`
		});
		return 0;
	}
	return h;
}

/** The fields of a touch, as typed. */
export interface TouchForm {
	machineZ: string;
	touchedThrough: TouchThrough;
	blockHeight: string;
}

/**
 * The touch both reading forms have: the machine Z the control showed (required) and the block
 * or setter under the tip. `machineZ` is undefined only when an issue says why.
 */
export function readTouch(
	machine: MachineRecord,
	form: TouchForm,
	issues: ReadingIssue[]
): { machineZ: number | undefined; block: number } {
	const machineZ = parseLength(machine, 'machineZ', 'Machine Z', form.machineZ, issues, {
		required: true
	});
	return { machineZ, block: blockFrom(machine, form.touchedThrough, form.blockHeight, issues) };
}

/** A recorded change (tool changed, part re-seated) needs a reason; `examples` says what kind. */
export function requireChangeReason(
	changed: boolean,
	reason: string,
	examples: string,
	issues: ReadingIssue[]
) {
	if (changed && !reason)
		issues.push({ field: 'reason', message: `Say what changed (${examples}).` });
}

/** The engine's answer, or its refusals on the form's fields (`map`: engine field → form field). */
export function fromEngine<T>(
	compute: () => T,
	map: Record<string, string>,
	machine: MachineRecord
): T {
	try {
		return compute();
	} catch (e) {
		engineIssues(e, map, machine);
	}
}

/** Engine refusals → form fields. */
function engineIssues(e: unknown, map: Record<string, string>, machine: MachineRecord): never {
	if (!isOffsetInputError(e)) throw e;
	throw new ReadingInputError(
		e.issues.map((i) => {
			const root = i.field.replace(/^input\./, '');
			const field = map[root] ?? map['*'] ?? 'machineZ';
			if (root === 'referenceGaugeLineZ') {
				return {
					field,
					message: `${machine.name}'s reference has no gauge-line Z recorded, which the gauge-length convention needs: a lead must re-establish the reference with it first.`
				};
			}
			if (root === 'masterTouchZ') {
				return {
					field,
					message: `The master tool (H${machine.masterToolH ?? '?'}) has no reading on the reference yet: touch it off first.`
				};
			}
			const label = field === 'blockHeight' ? 'Block height' : 'Machine Z';
			return { field, message: `${label} ${i.message}.${slipHint(machine, field, i.value)}` };
		})
	);
}

/**
 * For a machine Z outside the travel (or a block taller than it), which typing slip explains it
 * and the value it would give: " It is probably the decimal point … : -14.7502 in was likely meant."
 */
function slipHint(machine: MachineRecord, field: string, value: unknown): string {
	if (typeof value !== 'number' || !Number.isFinite(value)) return '';
	const range =
		field === 'blockHeight' ? { min: 0, max: machine.zTravel } : { min: -machine.zTravel, max: 0 };
	const slips = slipsIntoRange(value, range, machine.units, machine.resolution);
	if (slips.length === 0) return '';
	return ` It is ${slips.map((x) => describeSlip(x, machine.units, machine.resolution)).join('; or ')}.`;
}

/** The machine's newest reference; without one no offset can be worked out. */
export function requireReference(
	machine: MachineRecord,
	references: ReferenceRecord[]
): ReferenceRecord {
	const ref = references[0];
	if (!ref) {
		throw ReadingInputError.of(
			'machineZ',
			`${machine.name} has no reference recorded, so no offset can be worked out: a lead must establish one first.`
		);
	}
	return ref;
}

/** How the tip met the surface, as the reading's instrument column says it. */
export const instrumentText = (through: TouchThrough, block: number, machine: MachineRecord) =>
	through === 'directly'
		? 'directly'
		: `${through} ${formatWithUnits(block, machine.units, machine.resolution)}`;
