import bcrypt from 'bcryptjs';
import { config } from '../config';

export function hashPassword(password: string): Promise<string> {
	return bcrypt.hash(password, config.bcryptCost);
}

/**
 * A hash of a random secret at the same cost as real ones, made once per process: an unknown
 * e-mail costs the same bcrypt work as a known one, so timing does not reveal who has an
 * account (a fixed cost-10 hash was 4× faster than the cost-12 ones).
 */
let dummy: Promise<string> | undefined;
function dummyHash(): Promise<string> {
	dummy ??= bcrypt.hash(crypto.randomUUID(), config.bcryptCost);
	return dummy;
}

export async function verifyPassword(
	password: string,
	hash: string | null | undefined
): Promise<boolean> {
	if (!hash) {
		await bcrypt.compare(password, await dummyHash());
		return false;
	}
	return bcrypt.compare(password, hash);
}

/** bcrypt reads only the first 72 bytes of a password: longer ones are refused when set. */
export const BCRYPT_MAX_BYTES = 72;
