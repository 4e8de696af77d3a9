/**
 * Engine types, inferred from the schemas so a form, the API and the engine never drift apart.
 */
import type { z } from 'zod';
import type {
	checkInputSchema,
	controlStyleSchema,
	conversionGeometrySchema,
	historyEntrySchema,
	machineSchema,
	offsetTableSchema,
	policySchema,
	setupSchema
} from './schemas';

/** A machine's Z offsets: `work` by register ("G54", "G54.1 P3"), `tools` by H number ("1"). */
export type OffsetTable = z.infer<typeof offsetTableSchema>;
/** A machine: units, Z travel, resolution, convention, control style. */
export type Machine = z.infer<typeof machineSchema>;
/** 'rs274ngc' (G10 L1) or 'iso' (G10 L10). */
export type ControlStyle = z.infer<typeof controlStyleSchema>;
/** Shop thresholds as given (partial). */
export type PolicyInput = z.infer<typeof policySchema>;
/** One recorded value of a register. */
export type HistoryEntry = z.infer<typeof historyEntrySchema>;
/** A setup: fixtures, obstacles, tools, margin. */
export type Setup = z.infer<typeof setupSchema>;
/** Input of checkOffsets. */
export type CheckInput = z.infer<typeof checkInputSchema>;
/** Extra facts for convertTable. */
export type ConversionGeometry = z.infer<typeof conversionGeometrySchema>;
/** Epoch ms or ISO 8601 string. */
export type Timestamp = number | string;
