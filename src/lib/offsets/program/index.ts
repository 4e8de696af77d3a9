/**
 * Program check (DESIGN.md §3–4): reads a G-code program line by line and checks every move
 * against a setup's offsets, fixtures and clearance. See docs/OFFSETS.md §13.
 */
export {
	checkProgram,
	checkProgramStream,
	createProgramChecker,
	MAX_LINE_CHARS,
	type ProgramChecker,
	type ProgramCheckResult,
	type ProgramStats
} from './checker';
export {
	DIALECTS,
	dialectRules,
	type Dialect,
	type DialectFrom,
	type DialectRules
} from './dialect';
export type { ProgramProfile, ProfilePoint } from './profile';
export { createSubprogramCollector, type SubprogramLibrary } from './structure';
export {
	programSetupSchema,
	REGISTER_STATES,
	type ProgramSetup,
	type RegisterState
} from './schema';
