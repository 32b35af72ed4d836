import nodemailer, { type Transporter } from 'nodemailer';
import { SMTPServer } from 'smtp-server';
import { simpleParser } from 'mailparser';
import { desc } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { mailOutbox } from '$lib/server/db/schema';

export interface OutgoingMail {
	to: string | string[];
	subject: string;
	text: string;
	attachments?: { filename: string; content: Buffer; contentType: string }[];
}

interface Mailer {
	transport: Transporter;
	kind: 'fake' | 'smtp';
	close(): Promise<void>;
	/** Resolves once the fake server has stored every message handed to it. */
	settled(): Promise<void>;
}

const mailers = new WeakMap<Db, Promise<Mailer>>();

export const MAIL_FROM = () => process.env.MAIL_FROM || 'Packledger <no-reply@tidewater.example>';

/**
 * With SMTP_URL set, mail goes out through that server. Without it, a fake
 * SMTP server runs in this process on a loopback port and keeps every message
 * in the outbox table, where admins read it on the Outbox page and tests read it too.
 */
async function startMailer(db: Db): Promise<Mailer> {
	const smtpUrl = process.env.SMTP_URL;
	if (smtpUrl) {
		const transport = nodemailer.createTransport(smtpUrl);
		return {
			transport,
			kind: 'smtp',
			close: async () => transport.close(),
			settled: async () => {}
		};
	}
	const pending = new Set<Promise<void>>();
	const server = new SMTPServer({
		authOptional: true,
		disabledCommands: ['STARTTLS'],
		logger: false,
		onData(stream, session, callback) {
			const work = simpleParser(stream)
				.then(async (parsed) => {
					const to = session.envelope.rcptTo.map((r) => r.address).join(', ');
					await db.insert(mailOutbox).values({
						at: new Date(),
						fromAddr: session.envelope.mailFrom ? session.envelope.mailFrom.address : '',
						toAddr: to,
						subject: parsed.subject ?? '(no subject)',
						text: parsed.text ?? '',
						transport: 'fake'
					});
					callback();
				})
				.catch((e) => callback(e as Error));
			pending.add(work);
			work.finally(() => pending.delete(work));
		}
	});
	const port = await new Promise<number>((resolve, reject) => {
		server.listen(0, '127.0.0.1', () => {
			const addr = server.server.address();
			if (addr && typeof addr === 'object') resolve(addr.port);
			else reject(new Error('Fake SMTP server did not report a port'));
		});
		server.on('error', reject);
	});
	const transport = nodemailer.createTransport({
		host: '127.0.0.1',
		port,
		secure: false,
		ignoreTLS: true
	});
	return {
		transport,
		kind: 'fake',
		settled: async () => {
			await Promise.all([...pending]);
		},
		close: async () => {
			transport.close();
			await new Promise<void>((r) => server.close(() => r()));
		}
	};
}

function mailerFor(db: Db): Promise<Mailer> {
	let m = mailers.get(db);
	if (!m) {
		m = startMailer(db);
		mailers.set(db, m);
	}
	return m;
}

/** Sends one message. Throws when the SMTP server refuses it, so callers can say so. */
export async function sendMail(db: Db, mail: OutgoingMail): Promise<void> {
	const mailer = await mailerFor(db);
	await mailer.transport.sendMail({ from: MAIL_FROM(), ...mail });
	if (mailer.kind === 'fake') {
		await mailer.settled();
	} else {
		await db.insert(mailOutbox).values({
			at: new Date(),
			fromAddr: MAIL_FROM(),
			toAddr: Array.isArray(mail.to) ? mail.to.join(', ') : mail.to,
			subject: mail.subject,
			text: mail.text,
			transport: 'smtp'
		});
	}
}

export async function listOutbox(db: Db, limit = 200) {
	return db.select().from(mailOutbox).orderBy(desc(mailOutbox.id)).limit(limit);
}

export async function closeMailer(db: Db): Promise<void> {
	const m = mailers.get(db);
	if (m) {
		mailers.delete(db);
		await (await m).close();
	}
}
