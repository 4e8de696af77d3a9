/**
 * What the program check needs to know about the machine and the setup, as one zod schema
 * shared with the upload form and the API. Built from the engine's own schemas so a table or
 * a setup is judged the same way here as in checkOffsets.
 */
import { z } from 'zod';
import {
	controlStyleSchema,
	hNumberSchema,
	lengthSchema,
	machineSchema,
	offsetTableSchema,
	policySchema,
	registerSchema,
	setupSchema
} from '../schemas';

/** Register states a program check repeats as findings when the program uses that register. */
export const REGISTER_STATES = ['stale-age', 'stale-reference', 'unset'] as const;

/** One state or several for a register. */
const registerStateSchema = z.union([
	z.enum(REGISTER_STATES),
	z.array(z.enum(REGISTER_STATES)).max(REGISTER_STATES.length)
]);

/** Input of checkProgram / createProgramChecker (besides the program text). */
export const programSetupSchema = z.object({
	/** Units, Z travel (home at the top, Z 0), convention, name for messages. */
	machine: machineSchema,
	/** The offsets on the control, in the machine's units and convention. */
	table: offsetTableSchema,
	/** Fixtures (register, zero height, top height above the reference), obstacles, margin. */
	setup: setupSchema,
	/**
	 * Where the gauge line sits with a tip on the reference. Needed only to place the tip
	 * exactly for gauge-length (`referenceGaugeLineZ`, R) and master-tool (`masterTouchZ`,
	 * R + L_m) tables; without them the tip is placed as if the work offset matched the
	 * fixture's zero height.
	 */
	geometry: z
		.object({ referenceGaugeLineZ: lengthSchema.optional(), masterTouchZ: lengthSchema.optional() })
		.optional(),
	/** Machine Z of the gauge line after M6; default the top of travel (common shop practice). */
	toolChangeZ: lengthSchema.optional(),
	/**
	 * Which H register holds each tool's length, by tool number ("1": "1"). Tools not listed use
	 * the H of the same number (common shop practice).
	 */
	toolRegisters: z.record(z.string(), hNumberSchema).optional(),
	/** Registers known to be stale or never measured (e.g. from checkOffsets). */
	registerStatus: z
		.object({
			work: z.record(registerSchema, registerStateSchema).optional(),
			tools: z.record(hNumberSchema, registerStateSchema).optional()
		})
		.optional(),
	/** Shop thresholds (clearance margin when the setup gives none). */
	policy: policySchema.optional(),
	/** Put into each finding's subject, so keys stay unique across programs. */
	programId: z.string().optional(),
	/**
	 * Dialect to check in (docs/OFFSETS.md §13). Default: the machine's control style
	 * (`iso` → ISO-style, `rs274ngc` → RS274NGC-style), else RS274NGC-style.
	 */
	dialect: controlStyleSchema.optional(),
	/** Keep a downsampled picture of the tip's height along the program (`profile`). */
	profile: z.boolean().optional(),
	/** Cautions kept per kind; the rest are only counted (`stats.findingCounts`). Default 25. Stops are always kept. */
	maxFindingsPerKind: z.number().int().min(1).max(10_000).optional()
});

/** A program check's setup as given. */
export type ProgramSetup = z.input<typeof programSetupSchema>;

/** A register state repeated as a finding. */
export type RegisterState = (typeof REGISTER_STATES)[number];
