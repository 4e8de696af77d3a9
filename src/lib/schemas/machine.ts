import { z } from 'zod';
import {
	controlStyleSchema,
	conventionSchema,
	EXTENDED_ADDRESS_FORMS,
	MAX_EXTENDED_REGISTER,
	unitsSchema
} from '$lib/offsets';
import { lengthField, numberField, optionalLengthField } from './number';

/**
 * Machine and reference forms, shared by the pages and the API. Enum fields reuse the engine's
 * schemas so a form can never save a value the engine cannot read.
 */
export const INSTRUMENTS = ['1-2-3 block', 'gauge block', 'tool setter', 'other'] as const;

const machineShape = {
	name: z
		.string()
		.trim()
		.min(1, 'Give the machine a name.')
		.max(60, 'Name too long (60 characters at most).'),
	units: unitsSchema,
	zTravel: lengthField('Z travel', {
		min: 0,
		minExclusive: true,
		rangeMessage: 'Z travel must be greater than zero.'
	}),
	resolution: numberField('Least increment', {
		min: 0,
		minExclusive: true,
		rangeMessage: 'Least increment must be greater than zero.'
	}),
	controlStyle: controlStyleSchema.default('iso'),
	/** How many extended work offsets the control has (G54.1 P1…Pn, or G54 P1…Pn). */
	extendedWorkOffsets: numberField('Extended work offsets', {
		whole: true,
		min: 0,
		max: MAX_EXTENDED_REGISTER,
		rangeMessage: `Extended work offsets must be a whole number from 0 to ${MAX_EXTENDED_REGISTER} (Datumkeep keeps up to ${MAX_EXTENDED_REGISTER}).`
	}).default(0),
	extendedAddress: z.enum(EXTENDED_ADDRESS_FORMS).default('G54.1 P'),
	convention: conventionSchema.default('reference-touch'),
	notes: z.string().trim().max(2000, 'Notes too long (2000 characters at most).').default('')
};

function plausibleMachine(
	m: {
		units: 'inch' | 'mm';
		zTravel: number;
		resolution: number;
		controlStyle: 'rs274ngc' | 'iso';
		extendedWorkOffsets: number;
	},
	ctx: z.RefinementCtx
) {
	if (m.controlStyle === 'rs274ngc' && m.extendedWorkOffsets > 0) {
		ctx.addIssue({
			code: 'custom',
			path: ['extendedWorkOffsets'],
			message:
				'Load programs in the tool-table form (G10 L1) have no extended work offsets (its G10 L2 P7–P9 are G59.1–G59.3): set 0, or choose the G10 L10 length form.'
		});
	}
	// Plausibility, our own bounds: no vertical machining centre has Z travel of 2 m or more.
	const maxTravel = m.units === 'inch' ? 80 : 2000;
	if (m.zTravel >= maxTravel) {
		ctx.addIssue({
			code: 'custom',
			path: ['zTravel'],
			message: `Z travel ${m.zTravel} ${m.units === 'inch' ? 'in' : 'mm'} is implausible (must be under ${maxTravel}); check the units.`
		});
	}
	const allowed = m.units === 'inch' ? [0.0001, 0.00005, 0.001] : [0.001, 0.0005, 0.01];
	if (!allowed.includes(m.resolution)) {
		ctx.addIssue({
			code: 'custom',
			path: ['resolution'],
			message: `Least increment for ${m.units} must be one of ${allowed.join(', ')}.`
		});
	}
}

export const machineFormSchema = z.object(machineShape).superRefine(plausibleMachine);

const referenceShape = {
	instrument: z.enum(INSTRUMENTS, {
		message: `Instrument must be one of: ${INSTRUMENTS.join(', ')}.`
	}),
	height: lengthField('Height', { min: 0, rangeMessage: 'Height cannot be negative.' }),
	location: z.string().trim().max(200, 'Location too long (200 characters at most).').default(''),
	gaugeLineZ: optionalLengthField('Gauge-line Z').refine(
		(v) => v === undefined || v < 0,
		'Gauge-line Z is a machine coordinate below Z home, so it must be negative.'
	),
	note: z.string().trim().max(500, 'Note too long (500 characters at most).').default('')
};

export const referenceFormSchema = z.object(referenceShape);

/** New machine: the machine and its first reference on one form. */
export const newMachineSchema = z
	.object({ ...machineShape, ...referenceShape })
	.superRefine(plausibleMachine);
