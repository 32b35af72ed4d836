import nodemailer, { type Transporter } from 'nodemailer';
import { SMTPServer } from 'smtp-server';
import { simpleParser } from 'mailparser';
import { and, desc, type SQL } from 'drizzle-orm';
import { containsText } from '$lib/server/db/like';
import { recordUrl } from '$lib/server/base-url';
import { withWriteLock, type Db } from '$lib/server/db';
import { mailOutbox } from '$lib/server/db/schema';

export interface OutgoingMail {
	to: string | string[];
	subject: string;
	text: string;
	attachments?: { filename: string; content: Buffer; contentType: string }[];
	/**
	 * One-time links (invitations, password resets) inside `text`. The stored copy of a
	 * message sent through real SMTP has them blanked out, so nobody who can read the outbox
	 * can use them; the in-process fake keeps them, since there the outbox is the only inbox.
	 */
	oneTimeLinks?: string[];
	/**
	 * The path of the record the message is about (`/claims/12`): its full address is added as
	 * the message's last line, so every e-mail leads to its record.
	 */
	about?: string;
}

/** The message's text with the link to its record as the last line. */
export function withRecordLink(text: string, about: string | undefined): string {
	if (!about) return text;
	return `${text.trimEnd()}\n\nOpen it in Packledger: ${recordUrl(about)}\n`;
}

export const REDACTED_LINK = '[one-time link: sent to the recipient, not kept in this copy]';

/** The text as the outbox keeps it for real SMTP: every one-time link replaced. */
export function redactedCopy(mail: Pick<OutgoingMail, 'text' | 'oneTimeLinks'>): string {
	let text = mail.text;
	for (const link of mail.oneTimeLinks ?? []) if (link) text = text.split(link).join(REDACTED_LINK);
	return text;
}

interface Mailer {
	transport: Transporter;
	kind: 'fake' | 'smtp';
	close(): Promise<void>;
	/** Resolves once the fake server has stored every message handed to it. */
	settled(): Promise<void>;
}

const mailers = new WeakMap<Db, Promise<Mailer>>();
/** Every mailer started in this process, so that shutdown can close them all. */
const open = new Set<Promise<Mailer>>();

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
					await withWriteLock(db, () =>
						db.insert(mailOutbox).values({
							at: new Date(),
							fromAddr: session.envelope.mailFrom ? session.envelope.mailFrom.address : '',
							toAddr: to,
							subject: parsed.subject ?? '(no subject)',
							text: parsed.text ?? '',
							transport: 'fake'
						})
					);
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
		open.add(m);
		hookShutdown();
	}
	return m;
}

/** Sends one message. Throws when the SMTP server refuses it, so callers can say so. */
export async function sendMail(db: Db, mail: OutgoingMail): Promise<void> {
	const mailer = await mailerFor(db);
	const { oneTimeLinks, about, ...rest } = mail;
	const message = { ...rest, text: withRecordLink(rest.text, about) };
	await mailer.transport.sendMail({ from: MAIL_FROM(), ...message });
	if (mailer.kind === 'fake') {
		await mailer.settled();
	} else {
		await withWriteLock(db, () =>
			db.insert(mailOutbox).values({
				at: new Date(),
				fromAddr: MAIL_FROM(),
				toAddr: Array.isArray(mail.to) ? mail.to.join(', ') : mail.to,
				subject: mail.subject,
				text: redactedCopy({ text: message.text, oneTimeLinks }),
				transport: 'smtp'
			})
		);
	}
}

export interface OutboxFilter {
	/** Part of a recipient's address, taken literally. */
	to?: string;
	/** Part of the subject, taken literally. */
	subject?: string;
	limit?: number;
}

/** The outbox, newest first, optionally narrowed by recipient and subject. */
export async function listOutbox(db: Db, filter: OutboxFilter = {}) {
	const where: SQL[] = [];
	if (filter.to) where.push(containsText(mailOutbox.toAddr, filter.to));
	if (filter.subject) where.push(containsText(mailOutbox.subject, filter.subject));
	return db
		.select()
		.from(mailOutbox)
		.where(where.length ? and(...where) : undefined)
		.orderBy(desc(mailOutbox.id))
		.limit(filter.limit ?? 200);
}

export async function closeMailer(db: Db): Promise<void> {
	const m = mailers.get(db);
	if (m) {
		mailers.delete(db);
		open.delete(m);
		await (await m).close();
	}
}

/** Mail handed off without waiting (reset mails): finished before the mailers close. */
const queued = new Set<Promise<unknown>>();

export function queueMailWork(work: Promise<unknown>): void {
	queued.add(work);
	void work.finally(() => queued.delete(work));
}

/** Waits for queued mail, then closes every transport and fake SMTP server of this process. */
export async function closeAllMailers(): Promise<void> {
	await Promise.allSettled([...queued]);
	const all = [...open];
	open.clear();
	await Promise.allSettled(all.map(async (m) => (await m).close()));
}

/**
 * adapter-node answers SIGTERM and SIGINT by closing the HTTP server, letting in-flight
 * requests finish, then emitting `sveltekit:shutdown`. The fake SMTP server's listening
 * socket and nodemailer's connection would keep the process alive after that, so they close
 * here; the process then exits on its own.
 */
let shutdownHooked = false;
function hookShutdown() {
	if (shutdownHooked) return;
	shutdownHooked = true;
	process.once('sveltekit:shutdown' as 'beforeExit', () => void closeAllMailers());
}
