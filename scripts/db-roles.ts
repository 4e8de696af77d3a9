/**
 * `npm run db:roles`: the least-privilege roles (src/lib/server/db/roles.ts), run as the
 * superuser in DATABASE_URL before `migrate` (npm start and npm test do). Idempotent:
 * creates the roles when missing, hands every existing table, sequence, function and shop
 * schema to the owner role, and grants the app role what it needs in `public`. In production
 * a DBA runs it once (or the same statements) and gives `datumkeep_app` a password.
 */
import { createDb } from '$lib/server/db';
import { explainDbError, exitWith, guardDatabaseUrl } from '$lib/server/cli/guard';
import { APP_ROLE, OWNER_ROLE, SHOP_GROUP, shopRoleName } from '$lib/server/db/roles';

const url = guardDatabaseUrl();
const database = decodeURIComponent(new URL(url).pathname.slice(1));
const knex = createDb(url);

async function ensureRole(name: string, attributes: string) {
	const { rows } = await knex.raw('select 1 from pg_roles where rolname = ?', [name]);
	if (rows.length === 0) await knex.raw(`create role ?? ${attributes}`, [name]);
	else await knex.raw(`alter role ?? ${attributes}`, [name]);
}

try {
	const { rows: su } = await knex.raw("select current_setting('is_superuser') = 'on' as su");
	if (!su[0].su) exitWith('db-roles must run as a superuser (DATABASE_URL).');
	await ensureRole(OWNER_ROLE, 'nologin nosuperuser createrole nocreatedb');
	// NOINHERIT: the app role gets no shop's rights unless withShop switches to that shop's role.
	await ensureRole(APP_ROLE, 'login nosuperuser nocreaterole nocreatedb noinherit nobypassrls');
	await ensureRole(SHOP_GROUP, 'nologin nosuperuser nocreaterole nocreatedb');
	// The owner takes over what the app creates while provisioning a shop (then seals it).
	await knex.raw('grant ?? to ??', [APP_ROLE, OWNER_ROLE]);
	await knex.raw('grant ?? to ?? with admin option', [SHOP_GROUP, OWNER_ROLE]);
	await knex.raw('grant connect, temporary on database ?? to ??', [database, APP_ROLE]);
	await knex.raw('grant create on database ?? to ??', [database, OWNER_ROLE]);
	await knex.raw('grant usage, create on schema public to ??', [OWNER_ROLE]);
	await knex.raw('grant usage on schema public to ??, ??', [APP_ROLE, SHOP_GROUP]);

	// Everything already there (a database made before these roles) goes to the owner role.
	const schemas: string[] = (
		await knex.raw(
			"select nspname from pg_namespace where nspname = 'public' or nspname ~ '^shop_[0-9]+$'"
		)
	).rows.map((r: { nspname: string }) => r.nspname);
	for (const schema of schemas) {
		if (schema !== 'public') await knex.raw('alter schema ?? owner to ??', [schema, OWNER_ROLE]);
		const objects = await knex.raw(
			`select c.relname, c.relkind from pg_class c join pg_namespace n on n.oid = c.relnamespace
			where n.nspname = ? and c.relkind in ('r', 'p', 'v', 'm', 'S')
			and pg_get_userbyid(c.relowner) <> ?
			and not exists (select 1 from pg_depend d where d.objid = c.oid and d.deptype in ('a', 'i'))`,
			[schema, OWNER_ROLE]
		);
		for (const o of objects.rows as { relname: string; relkind: string }[]) {
			const kind = o.relkind === 'S' ? 'sequence' : o.relkind === 'v' ? 'view' : 'table';
			await knex.raw(`alter ${kind} ??.?? owner to ??`, [schema, o.relname, OWNER_ROLE]);
		}
		const fns = await knex.raw(
			`select p.oid::regprocedure::text as sig from pg_proc p join pg_namespace n on n.oid = p.pronamespace
			where n.nspname = ? and pg_get_userbyid(p.proowner) <> ?
			and not exists (select 1 from pg_depend d where d.objid = p.oid and d.deptype = 'e')`,
			[schema, OWNER_ROLE]
		);
		for (const f of fns.rows as { sig: string }[])
			await knex.raw(`alter function ${f.sig} owner to ??`, [OWNER_ROLE]);
	}

	// `public`: the app (and every shop role) reads and writes rows; never DDL, never the
	// migration bookkeeping. Future tables made by the owner role get the same grants.
	for (const grantee of [APP_ROLE, SHOP_GROUP]) {
		await knex.raw('grant select, insert, update, delete on all tables in schema public to ??', [
			grantee
		]);
		await knex.raw('grant usage, select on all sequences in schema public to ??', [grantee]);
		await knex.raw(
			'alter default privileges for role ?? in schema public grant select, insert, update, delete on tables to ??',
			[OWNER_ROLE, grantee]
		);
		await knex.raw(
			'alter default privileges for role ?? in schema public grant usage, select on sequences to ??',
			[OWNER_ROLE, grantee]
		);
		// dk_shop_keys: the shop keys' hashes are the owner's alone (docs/SECURITY.md).
		for (const t of ['knex_migrations', 'knex_migrations_lock', 'dk_shop_keys']) {
			const { rows } = await knex.raw('select to_regclass(?) as t', [`public.${t}`]);
			if (rows[0].t) await knex.raw('revoke all on table ?? from ??', [`public.${t}`, grantee]);
		}
	}
	const { rows: fn } = await knex.raw(
		"select to_regprocedure('public.dk_begin_shop_schema(text)') as f"
	);
	if (fn[0].f) {
		for (const f of ['dk_begin_shop_schema(text)', 'dk_seal_shop_schema(text)'])
			await knex.raw(`grant execute on function public.${f} to ??`, [APP_ROLE]);
	}
	// Since the shop keys (migrations/public/…_create_shop_keys): begin takes the token, and
	// every shop role may call the check its tables' row-level security runs.
	const { rows: keyed } = await knex.raw(
		"select to_regprocedure('public.dk_begin_shop_schema(text, text)') as f, to_regprocedure('public.dk_shop_ok(text)') as ok"
	);
	if (keyed[0].f)
		for (const f of ['dk_begin_shop_schema(text, text)', 'dk_seal_shop_schema(text)'])
			await knex.raw(`grant execute on function public.${f} to ??`, [APP_ROLE]);
	if (keyed[0].ok)
		await knex.raw('grant execute on function public.dk_shop_ok(text) to ??', [SHOP_GROUP]);
	// Shop roles for existing shop schemas (migrate seals each schema afterwards).
	for (const schema of schemas.filter((s) => s !== 'public')) {
		const role = shopRoleName(database, schema);
		await ensureRole(role, 'nologin');
		await knex.raw('grant ?? to ??', [SHOP_GROUP, role]);
		await knex.raw('grant ?? to ??', [role, APP_ROLE]);
	}
	console.log(
		`datumkeep: database roles ready (${OWNER_ROLE}, ${APP_ROLE}, ${schemas.length - 1} shop role(s))`
	);
} catch (e) {
	exitWith(`db-roles failed: ${explainDbError(e)}`);
} finally {
	await knex.destroy();
}
