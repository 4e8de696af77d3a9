import { randomUUID } from 'node:crypto';
import { mkdir, readFile, rm, writeFile } from 'node:fs/promises';
import { dirname, resolve, sep } from 'node:path';
import type { Knex } from 'knex';
import { formatBytes } from '$lib/format';
import { config } from '../config';
import { audit } from '../audit';
import type { Actor } from '../actor';

/** Largest photo we keep (bytes). The production server's BODY_SIZE_LIMIT must be above it. */
export const PHOTO_MAX_BYTES = 8 * 1024 * 1024;
/** Photos per setup: enough for every fixture and clamp, not a photo album. */
export const PHOTOS_PER_SETUP = 24;

export const PHOTO_TYPES = {
	'image/jpeg': 'jpg',
	'image/png': 'png',
	'image/webp': 'webp'
} as const;
export type PhotoType = keyof typeof PHOTO_TYPES;

/**
 * The image type from the file's first bytes (its name and the browser's claim can lie):
 * JPEG FF D8 FF, PNG 89 50 4E 47 0D 0A 1A 0A, WebP "RIFF" … "WEBP".
 */
export function sniffImageType(bytes: Uint8Array): PhotoType | null {
	const at = (i: number, ...b: number[]) => b.every((v, k) => bytes[i + k] === v);
	if (bytes.length >= 3 && at(0, 0xff, 0xd8, 0xff)) return 'image/jpeg';
	if (bytes.length >= 8 && at(0, 0x89, 0x50, 0x4e, 0x47, 0x0d, 0x0a, 0x1a, 0x0a))
		return 'image/png';
	if (bytes.length >= 12 && at(0, 0x52, 0x49, 0x46, 0x46) && at(8, 0x57, 0x45, 0x42, 0x50))
		return 'image/webp';
	return null;
}

/** What the file really is, in words, for the refusal. */
function describeContent(bytes: Uint8Array): string {
	const head = new TextDecoder('latin1').decode(bytes.slice(0, 8));
	if (head.startsWith('%PDF')) return 'a PDF document';
	if (head.startsWith('GIF8')) return 'a GIF image';
	if (head.startsWith('PK')) return 'a ZIP archive or Office document';
	if (bytes[0] === 0x42 && bytes[1] === 0x4d) return 'a BMP image';
	if (/^(II\*\0|MM\0\*)/.test(head)) return 'a TIFF image';
	if (bytes.length >= 12 && new TextDecoder('latin1').decode(bytes.slice(4, 12)).includes('ftyp'))
		return 'a HEIC or video file';
	return 'not an image we can read';
}

export type PhotoCheck =
	{ ok: true; type: PhotoType; bytes: Uint8Array; name: string } | { ok: false; message: string };

/** Size and type limits, with a message naming the file and why. */
export async function checkPhoto(file: unknown): Promise<PhotoCheck> {
	if (!(file instanceof File) || (file.size === 0 && !file.name)) {
		return { ok: false, message: 'Photo: choose a JPEG, PNG or WebP file to upload.' };
	}
	const name = file.name || 'the file';
	if (file.size === 0) return { ok: false, message: `"${name}" is empty (0 bytes).` };
	if (file.size > PHOTO_MAX_BYTES) {
		return {
			ok: false,
			message: `"${name}" is ${formatBytes(file.size)}; photos can be ${PHOTO_MAX_BYTES / 1024 / 1024} MB at most. Take it at a lower resolution or crop it.`
		};
	}
	const bytes = new Uint8Array(await file.arrayBuffer());
	const type = sniffImageType(bytes);
	if (!type) {
		return {
			ok: false,
			message: `"${name}" is ${describeContent(bytes)}: photos must be JPEG, PNG or WebP images.`
		};
	}
	return { ok: true, type, bytes, name };
}

/** Absolute path of a storage key, refusing anything that would leave the uploads folder. */
export function storagePath(key: string): string {
	const root = resolve(config.uploadsDir);
	const full = resolve(root, key);
	if (!full.startsWith(root + sep))
		throw new Error(`storage key leaves the uploads folder: ${key}`);
	return full;
}

/**
 * Checks and stores a photo for a setup: the file under UPLOADS_DIR/<schema>/setups/<id>/, its
 * row in setup_photos. Nothing is kept when either fails.
 */
export async function addSetupPhoto(
	trx: Knex.Transaction,
	schemaName: string,
	setupId: number,
	file: unknown,
	caption: string,
	actor: Actor
): Promise<{ ok: true; id: number } | { ok: false; message: string }> {
	const checked = await checkPhoto(file);
	if (!checked.ok) return checked;
	// Parallel uploads to one setup wait here for each other (a row lock on the setup, held to
	// the end of this transaction), so the count below includes every photo committed before:
	// counting without it let 6 parallel uploads with 2 slots free store 6.
	await trx('setups').where({ id: setupId }).forUpdate().first('id');
	const [{ n }] = await trx('setup_photos').where({ setup_id: setupId }).count({ n: '*' });
	if (Number(n) >= PHOTOS_PER_SETUP) {
		return {
			ok: false,
			message: `"${checked.name}" was not added: a setup keeps ${PHOTOS_PER_SETUP} photos at most. Remove one first.`
		};
	}
	const key = `${schemaName}/setups/${setupId}/${randomUUID()}.${PHOTO_TYPES[checked.type]}`;
	const path = storagePath(key);
	await mkdir(dirname(path), { recursive: true });
	await writeFile(path, checked.bytes, { flag: 'wx' });
	try {
		const [row] = await trx('setup_photos')
			.insert({
				setup_id: setupId,
				storage_key: key,
				original_name: checked.name.slice(0, 200),
				content_type: checked.type,
				byte_size: checked.bytes.byteLength,
				caption,
				uploaded_by: actor.id
			})
			.returning('id');
		await audit(trx, {
			actorUserId: actor.id,
			actorEmail: actor.email,
			action: 'setup.photo.add',
			target: `setup ${setupId}`,
			detail: { photo: Number(row.id), name: checked.name, bytes: checked.bytes.byteLength }
		});
		return { ok: true, id: Number(row.id) };
	} catch (e) {
		await rm(path, { force: true });
		throw e;
	}
}

/** A stored photo's bytes and type, or undefined when it is not this setup's. */
export async function readSetupPhoto(
	trx: Knex.Transaction,
	setupId: number,
	photoId: number
): Promise<{ bytes: Buffer; type: string; name: string } | undefined> {
	if (!Number.isSafeInteger(photoId) || photoId <= 0) return undefined;
	const row = await trx('setup_photos').where({ id: photoId, setup_id: setupId }).first();
	if (!row) return undefined;
	try {
		return {
			bytes: await readFile(storagePath(row.storage_key)),
			type: row.content_type,
			name: row.original_name
		};
	} catch {
		return undefined;
	}
}

/** Removes a photo's row (in the transaction) and then its file. */
export async function removeSetupPhoto(
	trx: Knex.Transaction,
	setupId: number,
	photoId: number,
	actor: Actor
): Promise<boolean> {
	const row = await trx('setup_photos').where({ id: photoId, setup_id: setupId }).first();
	if (!row) return false;
	await trx('setup_photos').where({ id: photoId }).delete();
	await audit(trx, {
		actorUserId: actor.id,
		actorEmail: actor.email,
		action: 'setup.photo.remove',
		target: `setup ${setupId}`,
		detail: { photo: photoId, name: row.original_name }
	});
	await rm(storagePath(row.storage_key), { force: true });
	return true;
}
