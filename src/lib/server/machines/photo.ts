import { randomUUID } from 'node:crypto';
import { mkdir, readFile, rm, writeFile } from 'node:fs/promises';
import { dirname } from 'node:path';
import type { Knex } from 'knex';
import { audit } from '../audit';
import { afterTransaction } from '../db/after-transaction';
import { checkPhoto, PHOTO_TYPES, storagePath } from '../setups/photos';
import type { Actor } from '../actor';

/**
 * Sets (or replaces) a machine's photo, with the same type and size checks as setup photos. The
 * new file is written first; the old one is removed only once the transaction has committed
 * (a rollback keeps it, since the row still points at it), and the new one if it rolls back.
 */
export async function setMachinePhoto(
	trx: Knex.Transaction,
	schemaName: string,
	machineId: number,
	file: unknown,
	by: Actor
): Promise<{ ok: true } | { ok: false; message: string }> {
	const checked = await checkPhoto(file);
	if (!checked.ok) return checked;
	const key = `${schemaName}/machines/${machineId}/${randomUUID()}.${PHOTO_TYPES[checked.type]}`;
	const path = storagePath(key);
	await mkdir(dirname(path), { recursive: true });
	await writeFile(path, checked.bytes, { flag: 'wx' });
	const removeNew = () => rm(path, { force: true });
	try {
		const old = await trx('machines').where({ id: machineId }).first('photo_key');
		await trx('machines')
			.where({ id: machineId })
			.update({ photo_key: key, photo_type: checked.type, photo_name: checked.name.slice(0, 200) });
		await audit(trx, {
			actorUserId: by.id,
			actorEmail: by.email,
			action: 'machine.photo.set',
			target: `machine ${machineId}`,
			detail: { name: checked.name, bytes: checked.bytes.byteLength }
		});
		const oldKey: string | null = old?.photo_key ?? null;
		afterTransaction(trx, {
			committed: async () => {
				if (oldKey) await rm(storagePath(oldKey), { force: true });
			},
			rolledBack: removeNew
		});
		return { ok: true };
	} catch (e) {
		await removeNew();
		throw e;
	}
}

export async function readMachinePhoto(
	trx: Knex.Transaction,
	machineId: number
): Promise<{ bytes: Buffer; type: string } | undefined> {
	const row = await trx('machines').where({ id: machineId }).first('photo_key', 'photo_type');
	if (!row?.photo_key) return undefined;
	try {
		return { bytes: await readFile(storagePath(row.photo_key)), type: row.photo_type };
	} catch {
		return undefined;
	}
}
