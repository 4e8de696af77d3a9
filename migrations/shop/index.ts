import type { Knex } from 'knex';
import * as m0001 from './20261202010100_create_machines_and_references';
import * as m0002 from './20261202010200_create_fixtures_and_tools';
import * as m0003 from './20261202010300_create_readings_and_offset_versions';
import * as m0004 from './20261202010400_create_setups';
import * as m0005 from './20261202010500_create_findings';
import * as m0006 from './20261202010600_create_audit_log';

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
	'20261202010600_create_audit_log': m0006
};
