import type { Knex } from 'knex';
import * as m0001 from './20261202000100_create_shops_users_memberships';
import * as m0002 from './20261202000200_create_invitations_and_password_resets';
import * as m0003 from './20261202000300_create_email_log';

/**
 * The public-schema migrations, in order. Listed by hand (not read from the folder) so the
 * production build bundles them; tests/integration/migrations.test.ts fails if a file here
 * is missing from this list.
 */
export const publicMigrations: Record<string, Knex.Migration> = {
	'20261202000100_create_shops_users_memberships': m0001,
	'20261202000200_create_invitations_and_password_resets': m0002,
	'20261202000300_create_email_log': m0003
};
