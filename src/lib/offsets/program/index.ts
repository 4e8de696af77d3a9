/**
 * Program check (DESIGN.md §3–4): reads a G-code program line by line and checks every move
 * against a setup's offsets, fixtures and clearance. See docs/OFFSETS.md §13.
 */
export {
	checkProgram,
	createProgramChecker,
	MAX_LINE_CHARS,
	type ProgramChecker,
	type ProgramCheckResult,
	type ProgramStats
} from './checker';
export {
	programSetupSchema,
	REGISTER_STATES,
	type ProgramSetup,
	type RegisterState
} from './schema';
