/** Row types of the shop tables (one set per `shop_<id>` schema); see ./tables.ts. */
import type { Int8, Numeric } from './tables';

export interface AuditLogRow {
	id: Int8;
	at: Date;
	actor_user_id: Int8 | null;
	actor_email: string;
	action: string;
	target: string;
	detail: unknown;
	ip: string;
}

export interface CheckRunRow {
	id: Int8;
	job_id: string;
	trigger: string;
	requested_by: Int8 | null;
	checked_at: Date;
	started_at: Date;
	finished_at: Date | null;
	status: string;
	machines: number;
	opened: number;
	still_open: number;
	resolved: number;
	error: string;
}

export interface CurrentOffsetRow {
	machine_id: Int8;
	register_kind: string;
	register: string;
	offset_version_id: Int8;
	value: Numeric;
	created_at: Date;
	reference_version: number;
	reading_id: Int8 | null;
}

export interface FindingRow {
	id: Int8;
	key: string;
	machine_id: Int8 | null;
	kind: string;
	severity: string;
	subject_type: string;
	subject: string;
	message: string;
	status: string;
	first_seen_at: Date;
	last_seen_at: Date;
	acknowledged_by: Int8 | null;
	acknowledged_at: Date | null;
	resolved_by: Int8 | null;
	resolved_at: Date | null;
	comment: string;
	previous_finding_id: Int8 | null;
}

export interface FixtureRow {
	id: Int8;
	machine_id: Int8;
	register: string;
	name: string;
	description: string;
	created_at: Date;
	archived_at: Date | null;
}

export interface MachineRow {
	id: Int8;
	name: string;
	units: string;
	z_travel: Numeric;
	resolution: Numeric;
	control_style: string;
	convention: string;
	master_tool_h: number | null;
	notes: string;
	created_at: Date;
	archived_at: Date | null;
	photo_key: string | null;
	photo_type: string | null;
	photo_name: string | null;
	last_reading_at: Date | null;
	extended_work_offsets: number;
	extended_address: string;
}

export interface OffsetVersionRow {
	id: Int8;
	machine_id: Int8;
	register_kind: string;
	register: string;
	value: Numeric;
	units: string;
	convention: string;
	reading_id: Int8 | null;
	reference_version: number;
	created_by: Int8 | null;
	created_at: Date;
}

export interface ProgramCheckRow {
	id: Int8;
	version_id: Int8;
	status: string;
	mode: string;
	input: unknown;
	progress_lines: number;
	progress_bytes: Int8;
	result: unknown | null;
	stops: number;
	cautions: number;
	note: string;
	queued_at: Date;
	started_at: Date | null;
	checked_at: Date | null;
}

export interface ProgramVersionRow {
	id: Int8;
	program_id: Int8;
	version: number;
	storage_key: string;
	original_name: string;
	byte_size: Int8;
	line_count: number;
	sha256: string;
	uploaded_by: Int8 | null;
	uploaded_at: Date;
}

export interface ProgramRow {
	id: Int8;
	setup_id: Int8;
	name: string;
	created_by: Int8 | null;
	created_at: Date;
}

export interface ReadbackValueRow {
	id: Int8;
	readback_id: Int8;
	machine_id: Int8;
	register_kind: string;
	register: string;
	value: Numeric | null;
	expected: Numeric | null;
	offset_version_id: Int8 | null;
	/** The component version compared against (issue 20: X/Y, radius, wear rows). */
	component_version_id: Int8 | null;
	status: string;
	causes: unknown;
	no_point_text: string | null;
}

export interface ReadbackRow {
	id: Int8;
	machine_id: Int8;
	setup_id: Int8 | null;
	source: string;
	file_name: string;
	file_text: string | null;
	units: string;
	control_style: string;
	equal_count: number;
	different_count: number;
	note: string;
	taken_by: Int8 | null;
	taken_at: Date;
}

export interface ReadingRow {
	id: Int8;
	machine_id: Int8;
	kind: string;
	tool_id: Int8 | null;
	fixture_id: Int8 | null;
	machine_z: Numeric;
	block_height: Numeric;
	instrument: string;
	reference_version: number;
	corrects_reading_id: Int8 | null;
	tool_changed: boolean;
	reason: string;
	taken_by: Int8 | null;
	taken_at: Date;
	override_reason: string;
	overridden_findings: string[];
	measured_at: Date | null;
	client_key: string | null;
}

export interface ReferenceSurfaceRow {
	id: Int8;
	machine_id: Int8;
	version: number;
	instrument: string;
	height: Numeric;
	location: string;
	gauge_line_z: Numeric | null;
	established_by: Int8 | null;
	established_at: Date;
	note: string;
}

export interface SetupFixtureRow {
	id: Int8;
	setup_id: Int8;
	fixture_id: Int8;
	obstacle_height: Numeric;
}

export interface SetupOpRow {
	id: Int8;
	setup_id: Int8;
	sequence: number;
	name: string;
	fixture_id: Int8 | null;
	notes: string;
}

export interface SetupPhotoRow {
	id: Int8;
	setup_id: Int8;
	storage_key: string;
	original_name: string;
	content_type: string;
	byte_size: number;
	caption: string;
	uploaded_by: Int8 | null;
	uploaded_at: Date;
}

export interface SetupSignoffRow {
	id: Int8;
	setup_id: Int8;
	entered_by: string;
	entered_on: Date;
	verified_by: string;
	verified_on: Date;
	first_part_by: string;
	first_part_on: Date;
	note: string;
	recorded_by: Int8 | null;
	recorded_at: Date;
}

export interface SetupStatusChangeRow {
	id: Int8;
	setup_id: Int8;
	from_status: string | null;
	to_status: string;
	changed_by: Int8 | null;
	changed_at: Date;
	note: string;
}

export interface SetupToolRow {
	id: Int8;
	setup_id: Int8;
	tool_id: Int8;
}

export interface SetupRow {
	id: Int8;
	machine_id: Int8;
	name: string;
	job: string;
	status: string;
	clearance_margin: Numeric;
	created_by: Int8 | null;
	created_at: Date;
}

export interface ToolRow {
	id: Int8;
	machine_id: Int8;
	t_number: number;
	h_number: number;
	description: string;
	holder: string;
	stickout: Numeric | null;
	nominal_length: Numeric | null;
	created_at: Date;
	archived_at: Date | null;
}

/** Every shop table by its bare name. */
export interface ShopTables {
	audit_log: AuditLogRow;
	check_runs: CheckRunRow;
	current_offsets: CurrentOffsetRow;
	findings: FindingRow;
	fixtures: FixtureRow;
	machines: MachineRow;
	offset_versions: OffsetVersionRow;
	program_checks: ProgramCheckRow;
	program_versions: ProgramVersionRow;
	programs: ProgramRow;
	readback_values: ReadbackValueRow;
	readbacks: ReadbackRow;
	readings: ReadingRow;
	reference_surfaces: ReferenceSurfaceRow;
	setup_fixtures: SetupFixtureRow;
	setup_ops: SetupOpRow;
	setup_photos: SetupPhotoRow;
	setup_signoffs: SetupSignoffRow;
	setup_status_changes: SetupStatusChangeRow;
	setup_tools: SetupToolRow;
	setups: SetupRow;
	tools: ToolRow;
}
