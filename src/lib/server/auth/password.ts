import bcrypt from 'bcryptjs';

/** bcrypt cost; 12 is a common production choice, tests may lower it through the env. */
const COST = Number(process.env.BCRYPT_COST ?? 12);

export function hashPassword(password: string): Promise<string> {
	return bcrypt.hash(password, COST);
}

export function verifyPassword(
	password: string,
	hash: string | null | undefined
): Promise<boolean> {
	// Compare against a fixed hash when the user is unknown, so timing does not reveal whether
	// the e-mail has an account.
	return bcrypt.compare(password, hash ?? DUMMY_HASH);
}

const DUMMY_HASH = '$2b$10$CwTycUXWue0Thq9StjUM0uJ8.RY6d0cb8zGqQb6dGoMkq3yYdwW6a';
