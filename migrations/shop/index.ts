import type { Knex } from 'knex';
import * as m0001 from './20261202010100_create_machines_and_references';
import * as m0002 from './20261202010200_create_fixtures_and_tools';
import * as m0003 from './20261202010300_create_readings_and_offset_versions';
import * as m0004 from './20261202010400_create_setups';
import * as m0005 from './20261202010500_create_findings';
import * as m0006 from './20261202010600_create_audit_log';
import * as m0007 from './20261202030000_change_setup_states';
import * as m0008 from './20261202030100_create_setup_status_changes';
import * as m0009 from './20261202030200_create_setup_photos';
import * as m0010 from './20261203070000_add_fleet_board_indexes';
import * as m0011 from './20261203070100_create_check_runs';
import * as m0012 from './20261202040000_create_programs';
import * as m0013 from './20261202040100_create_program_versions';
import * as m0014 from './20261202040200_create_program_checks';
import * as m0015 from './20261203080000_allow_recording_gauge_line_z';
import * as m0016 from './20261203085000_add_machine_photo';
import * as m0017 from './20261203090000_create_current_offsets';
import * as m0018 from './20261204090000_notify_board_changes';
import * as m0019 from './20261212100000_add_reading_overrides';
import * as m0020 from './20261212100100_link_recurring_findings';
import * as m0021 from './20261212100200_create_setup_signoffs';
import * as m1601 from './20261216000100_create_readbacks';
import * as m1602 from './20261216000200_notify_board_readbacks';
import * as m1603 from './20261216000300_add_extended_offsets_to_machines';
import * as m20261217a from './20261217090000_add_reading_device_time';
import * as m20261220p1 from './20261220000100_create_tool_library';
import * as m20261220p2 from './20261220000200_add_presetter_readings';
import * as m20261221a from './20261221090000_add_cutter_register_to_machines';
import * as m20261221b from './20261221090100_create_edge_readings';
import * as m20261221c from './20261221090200_create_part_measurements';
import * as m20261221d from './20261221090300_create_offset_components';
import * as m20270103a from './20270103090000_add_components_to_readback_values';
import * as m20270104a from './20270104000100_create_assembly_assignment_ends';
import * as m20270104b from './20270104000200_add_presetter_component_source';

/**
 * The migrations every shop schema gets, in order. Schema-agnostic: they run with the search
 * path set to the shop's schema. Listed by hand so the production build bundles them;
 * tests/integration/migrations.test.ts fails if a file in this folder is missing here.
 */
export const shopMigrations: Record<string, Knex.Migration> = {
	'20261202010100_create_machines_and_references': m0001,
	'20261202010200_create_fixtures_and_tools': m0002,
	'20261202010300_create_readings_and_offset_versions': m0003,
	'20261202010400_create_setups': m0004,
	'20261202010500_create_findings': m0005,
	'20261202010600_create_audit_log': m0006,
	'20261202030000_change_setup_states': m0007,
	'20261202030100_create_setup_status_changes': m0008,
	'20261202030200_create_setup_photos': m0009,
	'20261203070000_add_fleet_board_indexes': m0010,
	'20261203070100_create_check_runs': m0011,
	'20261202040000_create_programs': m0012,
	'20261202040100_create_program_versions': m0013,
	'20261202040200_create_program_checks': m0014,
	'20261203080000_allow_recording_gauge_line_z': m0015,
	'20261203085000_add_machine_photo': m0016,
	'20261203090000_create_current_offsets': m0017,
	'20261204090000_notify_board_changes': m0018,
	'20261212100000_add_reading_overrides': m0019,
	'20261212100100_link_recurring_findings': m0020,
	'20261212100200_create_setup_signoffs': m0021,
	'20261216000100_create_readbacks': m1601,
	'20261216000200_notify_board_readbacks': m1602,
	'20261216000300_add_extended_offsets_to_machines': m1603,
	'20261217090000_add_reading_device_time': m20261217a,
	'20261220000100_create_tool_library': m20261220p1,
	'20261220000200_add_presetter_readings': m20261220p2,
	'20261221090000_add_cutter_register_to_machines': m20261221a,
	'20261221090100_create_edge_readings': m20261221b,
	'20261221090200_create_part_measurements': m20261221c,
	'20261221090300_create_offset_components': m20261221d,
	'20270103090000_add_components_to_readback_values': m20270103a,
	'20270104000100_create_assembly_assignment_ends': m20270104a,
	'20270104000200_add_presetter_component_source': m20270104b
};
