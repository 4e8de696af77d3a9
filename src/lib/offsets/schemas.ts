/**
 * zod schemas for every engine input, shared with forms and the API so a value is judged the
 * same way everywhere. They check shape and plain validity (finite numbers, known registers,
 * known units); rules that need several fields together (travel, convention) live in the
 * entry points and throw `OffsetInputError` too.
 */
import { z } from 'zod';
import { CONVENTIONS } from './conventions';
import {
	canonicalH,
	canonicalRegister,
	EXTENDED_ADDRESS_FORMS,
	H_RULE,
	MAX_EXTENDED_REGISTER,
	REGISTER_RULE
} from './registers';
import { UNITS } from './units';

/** inch | mm */
export const unitsSchema = z.enum(UNITS);

/** reference-touch | gauge-length | master-tool */
export const conventionSchema = z.enum(CONVENTIONS);

/**
 * How the control writes tool lengths: 'rs274ngc' = RS274NGC-style (`G10 L1 P<tool> Z…`),
 * 'iso' = ISO-style (`G10 L10 P<H> R…`).
 */
export const controlStyleSchema = z.enum(['rs274ngc', 'iso']);

/** A finite length (zod 4 already refuses NaN and ±Infinity). */
export const lengthSchema = z.number();

/** A length that must be greater than zero. */
export const positiveLengthSchema = z.number().positive('must be greater than zero');

/** A work register as typed: G54–G59 or G54.1 P1–P48 (any spacing or case). */
export const registerSchema = z
	.string()
	.refine((s) => canonicalRegister(s) !== null, REGISTER_RULE);

/** An H number as typed: 1–9999, "H3" or "3". */
export const hNumberSchema = z.string().refine((s) => canonicalH(s) !== null, H_RULE);

/** Epoch milliseconds or an ISO 8601 date-time string. */
export const timestampSchema = z.union([
	z.number(),
	z.string().refine((s) => !Number.isNaN(Date.parse(s)), 'must be an ISO 8601 date-time')
]);

const lengthRecord = z.record(z.string(), lengthSchema);

/** OffsetTable: a machine's Z offsets in one convention and one unit (DESIGN.md §4). */
export const offsetTableSchema = z
	.object({
		convention: conventionSchema,
		units: unitsSchema,
		work: lengthRecord,
		tools: lengthRecord,
		masterTool: hNumberSchema.optional()
	})
	.superRefine((t, ctx) => {
		for (const key of Object.keys(t.work)) {
			if (canonicalRegister(key) === null)
				ctx.addIssue({ code: 'custom', path: ['work', key], message: REGISTER_RULE, input: key });
		}
		for (const key of Object.keys(t.tools)) {
			if (canonicalH(key) === null)
				ctx.addIssue({ code: 'custom', path: ['tools', key], message: H_RULE, input: key });
		}
		if (t.convention === 'master-tool') {
			if (t.masterTool === undefined) {
				ctx.addIssue({
					code: 'custom',
					path: ['masterTool'],
					message: 'is required for the master-tool convention (the H number whose offset is 0)',
					input: undefined
				});
			} else {
				const h = canonicalH(t.masterTool);
				const entry = Object.entries(t.tools).find(([k]) => canonicalH(k) === h);
				if (entry && entry[1] !== 0) {
					ctx.addIssue({
						code: 'custom',
						path: ['tools', entry[0]],
						message: 'is the master tool, whose offset must be 0 in the master-tool convention',
						input: entry[1]
					});
				}
			}
		}
	});

/** Z travel: a length (home at Z 0, valid spindle Z is [−travel, 0]) or explicit limits. */
export const zTravelSchema = z.union([
	positiveLengthSchema,
	z
		.object({ min: lengthSchema, max: lengthSchema })
		.refine((t) => t.min < t.max, { message: 'min must be below max', path: ['min'] })
]);

/** A machine as the engine needs it. */
export const machineSchema = z.object({
	id: z.string().optional(),
	name: z.string().optional(),
	units: unitsSchema,
	zTravel: zTravelSchema,
	/** The control's least increment; default 0.0001 in / 0.001 mm. */
	resolution: positiveLengthSchema.optional(),
	convention: conventionSchema.optional(),
	/** Default 'rs274ngc'. */
	controlStyle: controlStyleSchema.optional(),
	masterTool: hNumberSchema.optional(),
	/** How many extended work offsets (G54.1 P1…Pn) the control has; when absent, not limited. */
	extendedWorkOffsets: z.number().int().min(0).max(MAX_EXTENDED_REGISTER).optional(),
	/** How its programs address them: `G54.1 P3` (default) or `G54 P3`. */
	extendedAddress: z.enum(EXTENDED_ADDRESS_FORMS).optional()
});

/** Shop thresholds; every field optional, defaults in policy.ts. Lengths in `units`. */
export const policySchema = z.object({
	units: unitsSchema.optional(),
	jumpTolerance: positiveLengthSchema.optional(),
	clearanceMargin: z.number().nonnegative('must be zero or more').optional(),
	slipTolerance: z.number().positive().max(0.2, 'must be at most 0.2 (20 %)').optional(),
	minSlipMagnitude: z.number().nonnegative().optional(),
	toolMaxAgeDays: z.number().positive().optional(),
	workMaxAgeDays: z.number().positive().optional()
});

/** One recorded value of a register (a Reading turned into an offset). */
export const historyEntrySchema = z.object({
	value: lengthSchema,
	at: timestampSchema,
	/** A tool change (new tool, regrind, new holder) was recorded with this value. */
	toolChange: z.boolean().optional(),
	/** For a work offset: the fixture or part was re-placed (a new setup) with this value. */
	fixtureChange: z.boolean().optional()
});

/** Recorded values per register, oldest to newest in any order (sorted by `at`). */
export const historySchema = z.object({
	work: z.record(z.string(), z.array(historyEntrySchema)).optional(),
	tools: z.record(z.string(), z.array(historyEntrySchema)).optional()
});

/** A fixture in a setup: its register and heights above the reference. */
export const setupFixtureSchema = z.object({
	id: z.string().optional(),
	register: registerSchema,
	/** h_k: height of program zero above the reference. */
	zeroHeight: lengthSchema,
	/** Highest point of the part or fixture above the reference; default zeroHeight. */
	topHeight: lengthSchema.optional()
});

/** Anything else standing on the table (clamps, vise jaws), as height above the reference. */
export const obstacleSchema = z.object({ label: z.string().optional(), height: lengthSchema });

/** A tool used in a setup. */
export const setupToolSchema = z.object({ id: z.string().optional(), h: hNumberSchema });

/** A setup: fixtures at their heights, obstacles, tools, the shop's clearance margin. */
export const setupSchema = z.object({
	id: z.string().optional(),
	name: z.string().optional(),
	units: unitsSchema,
	resolution: positiveLengthSchema.optional(),
	/** Added above the tallest obstacle; default from policy (1 in / 25 mm). */
	margin: z.number().nonnegative('must be zero or more').optional(),
	fixtures: z.array(setupFixtureSchema).min(1, 'a setup needs at least one fixture'),
	obstacles: z.array(obstacleSchema).optional(),
	tools: z.array(setupToolSchema).optional()
});

/** Input of checkOffsets. Timestamps are epoch ms or ISO strings. */
export const checkInputSchema = z.object({
	machine: machineSchema,
	table: offsetTableSchema,
	history: historySchema.optional(),
	/** When the machine's reference was last re-established. */
	referenceEstablishedAt: timestampSchema.optional(),
	now: timestampSchema,
	setups: z.array(setupSchema).optional(),
	/** Registers used (by setups or programs): any missing or never measured gives `unset`. */
	used: z
		.object({ work: z.array(registerSchema).optional(), tools: z.array(hNumberSchema).optional() })
		.optional(),
	/** Registers known to hold no measurement even though the control shows a value. */
	unmeasured: z
		.object({ work: z.array(registerSchema).optional(), tools: z.array(hNumberSchema).optional() })
		.optional(),
	policy: policySchema.optional()
});

/** Extra facts convertTable may need (DESIGN.md §4 `geometry`). */
export const conversionGeometrySchema = z.object({
	/** R: gauge-line machine Z on the reference; needed to and from gauge-length. */
	referenceGaugeLineZ: lengthSchema.optional(),
	/** R + L_m: gauge-line Z with the master tool's tip on the reference; needed out of master-tool. */
	masterTouchZ: lengthSchema.optional(),
	/** Master tool H number when converting into master-tool (default: table's, else lowest H). */
	masterTool: hNumberSchema.optional()
});

const readingBase = {
	units: unitsSchema,
	resolution: positiveLengthSchema.optional(),
	/** When given, readings outside its Z travel are refused. */
	machine: machineSchema.optional()
};

/** A tool tip touched on the reference, directly or on a setter / gauge block of height s. */
export const toolTouchSchema = z.object({
	...readingBase,
	convention: conventionSchema,
	/** Gauge-line machine Z shown at the touch. */
	touchZ: lengthSchema,
	/** s: setter or gauge block height standing on the reference (0 if touched directly). */
	setterHeight: z.number().nonnegative('must be zero or more').optional(),
	referenceGaugeLineZ: lengthSchema.optional(),
	masterTouchZ: lengthSchema.optional()
});

/** The same tool (or probe) read at the reference and at the part top. */
export const workFromReadingsSchema = z.object({
	...readingBase,
	convention: conventionSchema,
	referenceZ: lengthSchema,
	partTopZ: lengthSchema,
	/** Setter or gauge block under the tip at each reading (0 if touched directly). */
	referenceSetterHeight: z.number().nonnegative().optional(),
	partSetterHeight: z.number().nonnegative().optional(),
	referenceGaugeLineZ: lengthSchema.optional(),
	masterTouchZ: lengthSchema.optional()
});

/** The relative display zeroed at the reference and read at the part top. */
export const workFromRelativeSchema = z.object({
	units: unitsSchema,
	resolution: positiveLengthSchema.optional(),
	convention: conventionSchema,
	relativeReading: lengthSchema,
	zeroedOnSetterHeight: z.number().nonnegative().optional(),
	partSetterHeight: z.number().nonnegative().optional(),
	referenceGaugeLineZ: lengthSchema.optional(),
	masterTouchZ: lengthSchema.optional()
});

/** Any tool with a known offset touched on the part top: W = reading − s − H. */
export const workFromPartTouchSchema = z.object({
	...readingBase,
	partTopZ: lengthSchema,
	setterHeight: z.number().nonnegative().optional(),
	toolOffset: lengthSchema
});

/** Re-establishing the reference: the same tool/probe read on it before and now. */
export const reestablishSchema = z.object({
	table: offsetTableSchema,
	previousReferenceZ: lengthSchema,
	newReferenceZ: lengthSchema,
	/** What moved: machine Z itself, or the reference block (parts stayed put). */
	cause: z.enum(['machine-shift', 'surface-moved'])
});

/** Options of loadProgram. */
export const loadProgramOptionsSchema = z.object({
	/** O-number, 1–9999; omitted when not given. */
	programNumber: z.number().int().min(1).max(9999).optional(),
	/** Wrap in % lines (default true). */
	percentFraming: z.boolean().optional(),
	/** A title for the first comment, e.g. the machine name. */
	title: z.string().max(60).optional(),
	/**
	 * Registers left out (Stop or stale, the gate's verdict): not written, and named with the
	 * reason in a comment so whoever loads the program knows the control keeps its old value.
	 */
	withheld: z.array(loadProgramNoteSchema()).optional(),
	/** Flagged registers a lead chose to include: a warning comment goes right above each line. */
	warnings: z.array(loadProgramNoteSchema()).optional()
});

/** One register named in a load program's comments: section, register and the reason. */
function loadProgramNoteSchema() {
	return z.object({
		section: z.enum(['work', 'tools']),
		register: z.string().min(1).max(20),
		reason: z.string().max(300)
	});
}

/** Input of gaugeStack. */
export const gaugeStackInputSchema = z.object({
	target: positiveLengthSchema,
	setName: z.string()
});
