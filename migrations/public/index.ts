import type { Knex } from 'knex';
import * as m0001 from './20261202000100_create_shops_users_memberships';
import * as m0002 from './20261202000200_create_invitations_and_password_resets';
import * as m0003 from './20261202000300_create_email_log';
import * as m0004 from './20261202020000_add_subscription_to_shops';
import * as m0005 from './20261202020100_create_billing_events';
import * as m0006 from './20261202020200_create_billing_invoices';
import * as m0007 from './20261203070000_add_check_hour_to_shops';
import * as m0008 from './20261203070100_add_digest_opt_out_to_memberships';
import * as m0009 from './20261204090000_create_change_notifications';
import * as m1601 from './20261216000100_add_readback_hours_to_shops';
import * as m1800 from './20261218090000_add_settings_to_shops';
import * as m1801 from './20261218090100_add_deletion_to_shops';
import * as m1802 from './20261218090200_create_shop_lifecycle_log';
import * as m1803 from './20261218090300_create_shop_exports';
import * as m1804 from './20261218090400_add_first_steps_to_shops';
import * as m1301 from './20261213090000_add_session_generation_to_users';
import * as m1302 from './20261213090100_create_shop_provisioning_functions';
import * as m2201 from './20261222090000_create_shop_drop_function';
import * as m3001 from './20261230090000_create_pending_signups';
import * as m3101 from './20261231090000_create_shop_keys';
import * as m3102 from './20261231090100_shop_drop_needs_key';
import * as m270101 from './20270102000100_create_shop_servers';
import * as m270301 from './20270103090000_add_wear_limit_to_shops';

/**
 * The public-schema migrations, in order. Listed by hand (not read from the folder) so the
 * production build bundles them; tests/integration/migrations.test.ts fails if a file here
 * is missing from this list.
 */
export const publicMigrations: Record<string, Knex.Migration> = {
	'20261202000100_create_shops_users_memberships': m0001,
	'20261202000200_create_invitations_and_password_resets': m0002,
	'20261202000300_create_email_log': m0003,
	'20261202020000_add_subscription_to_shops': m0004,
	'20261202020100_create_billing_events': m0005,
	'20261202020200_create_billing_invoices': m0006,
	'20261203070000_add_check_hour_to_shops': m0007,
	'20261203070100_add_digest_opt_out_to_memberships': m0008,
	'20261204090000_create_change_notifications': m0009,
	'20261216000100_add_readback_hours_to_shops': m1601,
	'20261218090000_add_settings_to_shops': m1800,
	'20261218090100_add_deletion_to_shops': m1801,
	'20261218090200_create_shop_lifecycle_log': m1802,
	'20261218090300_create_shop_exports': m1803,
	'20261218090400_add_first_steps_to_shops': m1804,
	'20261213090000_add_session_generation_to_users': m1301,
	'20261213090100_create_shop_provisioning_functions': m1302,
	'20261222090000_create_shop_drop_function': m2201,
	'20261230090000_create_pending_signups': m3001,
	'20261231090000_create_shop_keys': m3101,
	'20261231090100_shop_drop_needs_key': m3102,
	'20270102000100_create_shop_servers': m270101,
	'20270103090000_add_wear_limit_to_shops': m270301
};
