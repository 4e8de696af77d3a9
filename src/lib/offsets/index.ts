/**
 * Datumkeep's offset engine: pure TypeScript, no framework, database, DOM or I/O.
 * Entry points and shapes follow DESIGN.md §4; every entry point throws OffsetInputError
 * (field, value, why) on input it cannot use. See docs/OFFSETS.md.
 */
export { OffsetInputError, isOffsetInputError, type OffsetIssue } from './errors';
export {
	UNITS,
	MM_PER_INCH,
	DEFAULT_RESOLUTION,
	UNIT_LABEL,
	toUnits,
	roundToResolution,
	toIncrements,
	fromIncrements,
	resolutionFor,
	type Units
} from './units';
export { formatLength, formatWithUnits, decimalsFor } from './format';
export {
	canonicalRegister,
	canonicalH,
	sortRegisters,
	STANDARD_WORK_REGISTERS,
	MAX_EXTENDED_REGISTER,
	MAX_H_NUMBER,
	EXTENDED_ADDRESS_FORMS,
	registerForMachine,
	type ExtendedAddressForm
} from './registers';
export {
	CONVENTIONS,
	CONVENTION_LABEL,
	EXPECTED_SIGN,
	REFERENCE_DEPENDENCE,
	type Convention,
	type PhysicalGeometry
} from './conventions';
export * from './schemas';
export type {
	OffsetTable,
	Machine,
	ControlStyle,
	PolicyInput,
	HistoryEntry,
	Setup,
	CheckInput,
	ConversionGeometry,
	Timestamp
} from './types';
export { travelLimits, normalizeTable } from './table';
export { spindleZ } from './spindle';
export { convertTable, convertTableUnits, tableFromGeometry } from './convert';
export {
	referenceGaugeLineZFromTouch,
	toolOffsetFromTouch,
	zeroHeightFromReadings,
	workOffsetZFromReadings,
	workOffsetZFromRelative,
	workOffsetZFromPartTouch,
	reestablishReference,
	type ReestablishResult
} from './readings';
export {
	offsetDelta,
	tipZ,
	zeroHeightFromWorkOffset,
	type ZeroHeightGeometry
} from './differences';
export { DEFAULT_POLICY, resolvePolicy, type Policy } from './policy';
export {
	TABLE_FINDING_KINDS,
	PROGRAM_FINDING_KINDS,
	READBACK_FINDING_KINDS,
	COMPONENT_FINDING_KINDS,
	FINDING_KINDS,
	findingKey,
	subjectKey,
	makeFinding,
	sortFindings,
	findingSchema,
	type Finding,
	type FindingKind,
	type TableFindingKind,
	type ProgramFindingKind,
	type ReadbackFindingKind,
	type FindingSubject,
	type FindingStatus,
	type Severity
} from './findings';
export { checkOffsets } from './check';
export { clearancePlanes, tallestObstacle } from './clearance';
export {
	loadProgram,
	CONTROL_STYLE_LABEL,
	LOAD_PROGRAM_CAUTIONS,
	type LoadProgramOptions
} from './load-program';
export {
	parseLoadProgram,
	parseLoadProgramWithComponents,
	type LoadProgramComponents
} from './parse-load-program';
export { gaugeStack } from './gauge-blocks';
export { GAUGE_SETS, findGaugeSet, gaugeSetBlocks, type GaugeSet } from './gauge-sets';
export {
	checkProgram,
	checkProgramStream,
	createProgramChecker,
	programSetupSchema,
	REGISTER_STATES,
	MAX_LINE_CHARS,
	type ProgramChecker,
	type ProgramCheckResult,
	type ProgramStats,
	type ProgramSetup,
	type RegisterState,
	DIALECTS,
	createSubprogramCollector,
	type Dialect,
	type DialectFrom,
	type ProgramProfile,
	type ProfilePoint,
	type SubprogramLibrary
} from './program';
export {
	gateOffsets,
	classify as classifyRegisters,
	registerStatus,
	concernsWork,
	concernsTool,
	WITHHELD_STATUSES,
	type GateResult,
	type RegisterStatus,
	type RegisterVerdict
} from './gate';
export {
	nameSlip,
	slipKind,
	slipsIntoRange,
	blockHeightSlip,
	describeSlip,
	SLIP_WORDS,
	type NamedSlip,
	type BlockSlip,
	type SlipRule,
	type SlipKind
} from './slips';
export {
	FINDING_TITLE,
	APP_FINDING_KINDS,
	TITLED_KINDS,
	findingTitle,
	type AppFindingKind
} from './finding-titles';
export {
	parseControlFile,
	MAX_CONTROL_FILE_CHARS,
	type ControlFile,
	type NoPointFlag,
	type OtherRegister,
	type ReadbackSection
} from './parse-load-program';
export {
	compareReadback,
	componentRowLabel,
	registerLabel,
	READBACK_CAUSES,
	READBACK_CAUSE_TITLE,
	type ReadbackCause,
	type ReadbackComparison,
	type ReadbackInput,
	type ReadbackRow,
	type ReadbackValues,
	type ReadbackComponent,
	type ExpectedComponents,
	type OneSided
} from './readback';
export {
	edgePosition,
	centreFromEdges,
	approachWords,
	EDGE_AXES,
	APPROACH_SIDES,
	type EdgeAxis,
	type ApproachSide,
	type EdgeTouch,
	type FeatureSide,
	type CentreResult
} from './edges';
export {
	proposeWear,
	wearBeyondLimit,
	effectiveValue,
	DEFAULT_WEAR_LIMIT,
	WEAR_LIMIT_RANGE,
	wearLimitIn,
	MEASURED_FEATURES,
	type WearProposal,
	type WearRegister,
	type MeasuredFeature,
	type CutterRegisterMode
} from './wear';
export { toolOffsetFromPresetter } from './presetter';
export { checkEdgeValue, checkWearValue, type PreviousEdge } from './component-checks';
