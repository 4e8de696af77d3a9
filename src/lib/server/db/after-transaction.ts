import type { Knex } from 'knex';

/**
 * Work outside the database that must follow the transaction's outcome — removing a file the
 * committed rows no longer point at, or one written for rows that were rolled back. Runs once
 * the COMMIT (or ROLLBACK) has happened; failures are logged, never thrown into the request.
 */
export function afterTransaction(
	trx: Knex.Transaction,
	on: { committed?: () => Promise<unknown>; rolledBack?: () => Promise<unknown> }
): void {
	const run = (what: 'committed' | 'rolledBack') => {
		const fn = on[what];
		if (!fn) return;
		fn().catch((e) => console.error(`after the transaction ${what}:`, e));
	};
	trx.executionPromise.then(
		() => run('committed'),
		() => run('rolledBack')
	);
}
