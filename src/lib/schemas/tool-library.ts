import { z } from 'zod';
import {
	idField,
	lengthField,
	numberField,
	optionalLengthField,
	optionalNumberField
} from './number';

/**
 * The shop's tool library (issue 20): assemblies measured on a presetter, the presetter CSV
 * mapping, and putting an assembly in a machine pocket. Shared by the pages and the JSON API.
 */

export const LIBRARY_UNITS = ['inch', 'mm'] as const;
const units = z.enum(LIBRARY_UNITS, { message: 'Units must be inch or mm.' });

const text = (max: number, label: string) =>
	z.string().trim().max(max, `${label} is too long (${max} characters at most).`).default('');

/**
 * When it was measured: "2026-12-03", "2026-12-03T09:30" or "2026-12-03 09:30[:ss]" in the
 * shop's time zone, or blank for now. Kept as text here; the server reads it with the zone.
 */
export const MEASURED_AT_PATTERN = /^\d{4}-\d{2}-\d{2}([T ]\d{2}:\d{2}(:\d{2})?)?$/;
const measuredAt = z
	.string()
	.trim()
	.default('')
	.refine(
		(s) => s === '' || MEASURED_AT_PATTERN.test(s),
		'Measured at must be a date as 2026-12-03 or a date and time as 2026-12-03 09:30 (the shop’s time zone).'
	);

export const assemblyName = z
	.string()
	.trim()
	.min(1, 'Name the assembly (e.g. "A-12"): the label on its holder.')
	.max(60, 'Name too long (60 characters at most).');

/** One presetter measurement of an assembly (a re-measure is a new one). */
export const measurementFields = {
	gaugeLength: lengthField('Gauge length', {
		min: 0,
		minExclusive: true,
		rangeMessage: 'Gauge length must be greater than zero (tip below the gauge line).'
	}),
	radius: optionalLengthField('Radius', {
		min: 0,
		rangeMessage: 'Radius must be zero or more.'
	}),
	units,
	presetter: text(80, 'Presetter'),
	measuredAt,
	note: text(500, 'Note')
};
export const measurementFormSchema = z.object(measurementFields);
export type MeasurementForm = z.infer<typeof measurementFormSchema>;

/** A new assembly with its first measurement. */
export const assemblyFormSchema = z.object({
	name: assemblyName,
	holder: text(120, 'Holder'),
	cutter: text(120, 'Cutter'),
	stickOut: optionalLengthField('Stick-out', {
		min: 0,
		rangeMessage: 'Stick-out must be zero or more.'
	}),
	...measurementFields
});
export type AssemblyForm = z.infer<typeof assemblyFormSchema>;

/** Fields a presetter CSV can fill; `name` and `gaugeLength` must be mapped. */
export const MAPPED_FIELDS = [
	'name',
	'gaugeLength',
	'radius',
	'diameter',
	'holder',
	'cutter',
	'stickOut',
	'measuredAt',
	'presetter'
] as const;
export type MappedField = (typeof MAPPED_FIELDS)[number];
export const MAPPED_FIELD_LABEL: Record<MappedField, string> = {
	name: 'Assembly name',
	gaugeLength: 'Gauge length',
	radius: 'Radius',
	diameter: 'Diameter',
	holder: 'Holder',
	cutter: 'Cutter',
	stickOut: 'Stick-out',
	measuredAt: 'Measured at',
	presetter: 'Presetter'
};

const header = (label: string) => text(80, `${label} column`);

/** How the shop's presetter writes its CSV: which header holds what, units, separators. */
export const presetterMappingSchema = z
	.object({
		name: header('Assembly name').refine(
			(s) => s !== '',
			'Name the column that holds the assembly name.'
		),
		gaugeLength: header('Gauge length').refine(
			(s) => s !== '',
			'Name the column that holds the gauge length.'
		),
		radius: header('Radius'),
		diameter: header('Diameter'),
		holder: header('Holder'),
		cutter: header('Cutter'),
		stickOut: header('Stick-out'),
		measuredAt: header('Measured at'),
		presetter: header('Presetter'),
		units,
		decimalSeparator: z.enum(['point', 'comma'], {
			message: 'Decimal separator must be point or comma.'
		}),
		delimiter: z.enum(['comma', 'semicolon', 'tab'], {
			message: 'Column separator must be comma, semicolon or tab.'
		})
	})
	.superRefine((m, ctx) => {
		if (m.radius && m.diameter)
			ctx.addIssue({
				code: 'custom',
				path: ['diameter'],
				message: 'Map radius or diameter, not both.'
			});
		if (m.decimalSeparator === 'comma' && m.delimiter === 'comma')
			ctx.addIssue({
				code: 'custom',
				path: ['delimiter'],
				message:
					'With a decimal comma the columns cannot be separated by commas too: choose semicolon or tab (as such presetters write it).'
			});
		const used = new Map<string, string>();
		for (const f of MAPPED_FIELDS) {
			const h = m[f].toLowerCase();
			if (!h) continue;
			const other = used.get(h);
			if (other)
				ctx.addIssue({
					code: 'custom',
					path: [f],
					message: `Column "${m[f]}" is already mapped to ${MAPPED_FIELD_LABEL[other as MappedField]}.`
				});
			else used.set(h, f);
		}
	});
export type PresetterMapping = z.infer<typeof presetterMappingSchema>;

/** Import (or preview) a presetter CSV with the shop's stored mapping. */
export const presetterImportSchema = z.object({
	csv: z.string().min(1, 'The CSV is empty: upload the presetter’s export.'),
	fileName: text(200, 'File name'),
	/** true: check every row and answer the preview; nothing is written. */
	preview: z.boolean().default(false)
});

/** Put an assembly in a machine pocket: its H is worked out for that machine. */
export const assignFormSchema = z.object({
	machineId: idField('Machine', 'Choose the machine.'),
	t: numberField('T number', {
		whole: true,
		min: 1,
		max: 9999,
		rangeMessage: 'T number must be a whole number from 1 to 9999.'
	}),
	/** Blank: the pocket's tool keeps its H, a new tool gets H = T. */
	h: optionalNumberField('H number', {
		whole: true,
		min: 1,
		max: 9999,
		rangeMessage: 'H number must be a whole number from 1 to 9999.'
	}),
	override: z.boolean().default(false),
	overrideReason: text(500, 'Reason')
});
export type AssignForm = z.infer<typeof assignFormSchema>;

export const assemblyIdSchema = z.object({ assemblyId: idField('Assembly', 'Unknown assembly.') });
