import { z } from 'zod';

/**
 * Forms and API bodies for the offset components beside Z (issue 20): a work offset's X/Y from
 * edge readings, the radius geometry and wear registers, and wear from a measured part. Numbers
 * stay text here, as typed; the server reads them with the machine's units and increment
 * (src/lib/server/components), so each message names the field, the value and the rule.
 */

const num = (label: string) =>
	z.string().trim().max(40, `${label} is too long to be a length.`).default('');
const text = (max: number, label: string) =>
	z.string().trim().max(max, `${label} is too long (${max} characters at most).`).default('');

const override = {
	/** "Save anyway": the member saw the Stop findings and saves over them, with a reason. */
	override: z.boolean().default(false),
	overrideReason: text(500, 'Override reason')
};

export const EDGE_DATUMS = ['edge', 'centre'] as const;
export const EDGE_SIDES = ['minus', 'plus'] as const;
export const CENTRE_FEATURES = ['outside', 'inside'] as const;

/** One X or Y of a work offset from one edge, or from two opposite edges (centre). */
export const edgeReadingSchema = z.object({
	register: z
		.string()
		.trim()
		.min(1, 'Choose the work offset (e.g. G54).')
		.max(20, 'Work offset is too long.'),
	axis: z.enum(['X', 'Y'], { message: 'Choose X or Y.' }),
	datum: z.enum(EDGE_DATUMS, { message: 'Choose edge or centre.' }).default('edge'),
	feature: z
		.enum(CENTRE_FEATURES, { message: 'Choose outside (boss) or inside (bore).' })
		.default('outside'),
	probeDiameter: num('Probe diameter'),
	firstCoordinate: num('Machine coordinate'),
	firstSide: z.enum(EDGE_SIDES, { message: 'Choose the side the probe came from.' }),
	secondCoordinate: num('Second machine coordinate'),
	secondSide: z.enum(EDGE_SIDES).default('plus'),
	instrument: text(100, 'Instrument'),
	reason: text(500, 'Reason'),
	...override
});
export type EdgeReadingForm = z.infer<typeof edgeReadingSchema>;

/** The tool registers a lead may set by hand (length geometry is the touch-off's Z). */
export const TOOL_COMPONENTS = ['radius', 'length-wear', 'radius-wear'] as const;
export type ToolComponent = (typeof TOOL_COMPONENTS)[number];

/** The key of each tool register in the engine's component values (load program, read-back). */
export const TOOL_COMPONENT_KEY: Record<ToolComponent, 'radius' | 'lengthWear' | 'radiusWear'> = {
	radius: 'radius',
	'length-wear': 'lengthWear',
	'radius-wear': 'radiusWear'
};

export const TOOL_COMPONENT_LABEL: Record<ToolComponent, string> = {
	radius: 'Radius geometry',
	'length-wear': 'Length wear',
	'radius-wear': 'Radius wear'
};

/** Set one register of a tool: its radius (or diameter) geometry, or a wear value. */
export const toolRegisterSchema = z.object({
	h: z
		.string()
		.trim()
		.regex(/^\d{1,4}$/, 'must be an H/D number (1–9999)'),
	component: z.enum(TOOL_COMPONENTS, {
		message: 'Choose radius geometry, length wear or radius wear.'
	}),
	value: num('Value'),
	reason: text(500, 'Reason'),
	...override
});
export type ToolRegisterForm = z.infer<typeof toolRegisterSchema>;

export const PART_FEATURES = ['depth', 'outside', 'inside'] as const;
export const PART_FEATURE_LABEL: Record<(typeof PART_FEATURES)[number], string> = {
	depth: 'Depth (floor cut by the end of the tool)',
	outside: 'Outside size (boss, width over flats)',
	inside: 'Inside size (bore, slot or pocket width)'
};

/** A measured feature: nominal and measured size and the tool that cut it. */
export const partMeasurementSchema = z.object({
	h: z
		.string()
		.trim()
		.regex(/^\d{1,4}$/, 'must be an H/D number (1–9999)'),
	feature: z.enum(PART_FEATURES, { message: 'Choose depth, outside or inside.' }),
	nominal: num('Nominal size'),
	measured: num('Measured size'),
	note: text(500, 'Note'),
	/** Set by the "Accept" button; without it the proposal is only shown. */
	accept: z.boolean().default(false),
	...override
});
export type PartMeasurementForm = z.infer<typeof partMeasurementSchema>;

/** What the machine's cutter compensation (D) registers hold: a machine setting. */
export const cutterRegisterSchema = z.object({
	cutterRegister: z.enum(['radius', 'diameter'], { message: 'Choose radius or diameter.' })
});
