import { hash, verify } from '@node-rs/argon2';

// Argon2id with the OWASP Password Storage Cheat Sheet's minimum (19 MiB, 2 passes, 1 lane).
const OPTIONS = { memoryCost: 19456, timeCost: 2, parallelism: 1 } as const;

export function hashPassword(password: string): Promise<string> {
	return hash(password, OPTIONS);
}

export async function verifyPassword(hashed: string, password: string): Promise<boolean> {
	try {
		return await verify(hashed, password);
	} catch {
		return false;
	}
}

export const PASSWORD_MIN_LENGTH = 10;
