/**
 * Stored copies of mail sent through real SMTP carry no usable one-time link; the
 * in-process fake (local use and tests) keeps them, as its outbox is the only inbox.
 */
import { afterAll, beforeAll, describe, expect, it } from 'vitest';
import { SMTPServer } from 'smtp-server';
import { eq } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { mailOutbox } from '$lib/server/db/schema';
import { closeMailer } from '$lib/server/mail';
import { inviteUser } from '$lib/server/services/users';
import { requestPasswordReset } from '$lib/server/services/account-links';
import { actorFor, createSeededDb } from '../factories/db';

const BASE = 'https://register.tidewater.example';
let received: string[] = [];
let smtp: SMTPServer;
let port = 0;

beforeAll(async () => {
	smtp = new SMTPServer({
		authOptional: true,
		disabledCommands: ['STARTTLS'],
		logger: false,
		onData(stream, _s, cb) {
			let text = '';
			stream.on('data', (c) => (text += c));
			stream.on('end', () => {
				received.push(text);
				cb();
			});
		}
	});
	await new Promise<void>((r) => smtp.listen(0, '127.0.0.1', () => r()));
	port = (smtp.server.address() as { port: number }).port;
});
afterAll(() => new Promise<void>((r) => smtp.close(() => r())));

describe('one-time links in stored mail', () => {
	it('with real SMTP, the recipient gets the link and the stored copy does not', async () => {
		process.env.SMTP_URL = `smtp://127.0.0.1:${port}?ignoreTLS=true`;
		const db: Db = await createSeededDb();
		try {
			received = [];
			await requestPasswordReset(db, 'workshop@tidewater.example', BASE);
			const admin = await actorFor(db, 'admin@tidewater.example');
			await inviteUser(
				db,
				admin,
				{ email: 'new@saltmarsh.example', name: 'New Person', role: 'dealer', organisationId: 2 },
				BASE
			);
			expect(received.join('\n')).toMatch(/\/reset\/[A-Za-z0-9_-]{20,}/);
			expect(received.join('\n')).toMatch(/\/welcome\/[A-Za-z0-9_-]{20,}/);
			const stored = await db.select().from(mailOutbox).where(eq(mailOutbox.transport, 'smtp'));
			expect(stored).toHaveLength(2);
			for (const m of stored) {
				expect(m.text).not.toMatch(/\/(reset|welcome)\//);
				expect(m.text).toContain('one-time link');
			}
		} finally {
			await closeMailer(db);
			delete process.env.SMTP_URL;
		}
	});

	it('the in-process fake keeps the link readable', async () => {
		delete process.env.SMTP_URL;
		const db: Db = await createSeededDb();
		try {
			await requestPasswordReset(db, 'workshop@tidewater.example', BASE);
			const [m] = await db.select().from(mailOutbox);
			expect(m.transport).toBe('fake');
			expect(m.text).toMatch(/\/reset\/[A-Za-z0-9_-]{20,}/);
		} finally {
			await closeMailer(db);
		}
	});
});
