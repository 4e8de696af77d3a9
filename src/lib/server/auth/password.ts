import bcrypt from 'bcryptjs';

/** bcrypt cost; 12 is a common production choice, tests may lower it through the env. */
const COST = Number(process.env.BCRYPT_COST ?? 12);

export function hashPassword(password: string): Promise<string> {
	return bcrypt.hash(password, COST);
}

/**
 * A hash of a random secret at the same cost as real ones, made once per process: an unknown
 * e-mail costs the same bcrypt work as a known one, so timing does not reveal who has an
 * account (a fixed cost-10 hash was 4× faster than the cost-12 ones).
 */
let dummy: Promise<string> | undefined;
function dummyHash(): Promise<string> {
	dummy ??= bcrypt.hash(crypto.randomUUID(), COST);
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
