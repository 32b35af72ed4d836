/**
 * Sending a certificate's PDF to the site's dealer and, when the owner's contact is an e-mail
 * address, to the owner. The wording is in mail/templates/certificates.ts.
 */
import { eq } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import { organisations, sites, systems } from '$lib/server/db/schema';
import type { Actor } from '$lib/server/actor';
import { sendMail } from '$lib/server/mail';
import { certificateIssued } from '$lib/server/mail/templates/certificates';
import { certificatePdf } from './certificate-pdf';
import { certificateData, certificateExtras, verifyUrlOf } from './certificates';

/** Where a certificate's mail went; `error` when the mail server refused it (the commissioning stands). */
export interface CertificateMail {
	to: string;
	sent: boolean;
	error?: string;
	/** The copy to the owner, when the owner's contact is an e-mail address. */
	owner: { to: string; sent: boolean; error?: string } | null;
}

const OWNER_EMAIL = /^[^\s@]+@[^\s@]+\.[^\s@]{2,}$/;

/** The owner's e-mail address when the contact on record is one (it may be a phone number). */
function ownerEmailOf(contact: string | null | undefined): string | null {
	const c = contact?.trim() ?? '';
	return c.length <= 254 && OWNER_EMAIL.test(c) ? c : null;
}

/**
 * Sends the certificate PDF to the site's dealer (or the assembler's office for its own
 * sites), and to the owner as well when the owner's contact is an e-mail address.
 */
export async function mailCertificate(
	db: Db,
	actor: Actor,
	commissioningId: number
): Promise<CertificateMail> {
	const data = await certificateData(db, actor, commissioningId);
	const [org] = data.site.dealerOrgId
		? await db
				.select({ email: organisations.contactEmail })
				.from(organisations)
				.where(eq(organisations.id, data.site.dealerOrgId))
		: await db
				.select({ email: organisations.contactEmail })
				.from(organisations)
				.where(eq(organisations.kind, 'assembler'))
				.limit(1);
	const [siteRow] = await db
		.select({ ownerContact: sites.ownerContact })
		.from(sites)
		.innerJoin(systems, eq(systems.siteId, sites.id))
		.where(eq(systems.id, data.system.id));
	const ownerTo = ownerEmailOf(siteRow?.ownerContact);
	const pdf = await certificatePdf(data, await certificateExtras(db, actor, data));
	// The dealer's copy ends with the address of the record; the owner has no account, so theirs
	// points to the public verification page only.
	const send = async (
		to: string,
		about?: string
	): Promise<{ to: string; sent: boolean; error?: string }> => {
		try {
			await sendMail(db, {
				to,
				...certificateIssued(data, verifyUrlOf(data)),
				about,
				attachments: [
					{
						filename: `${data.certificateNo}.pdf`,
						content: Buffer.from(pdf),
						contentType: 'application/pdf'
					}
				]
			});
			return { to, sent: true };
		} catch (e) {
			// The commissioning is stored either way; the page says the mail failed so someone sends the PDF by hand.
			console.error(`Certificate ${data.certificateNo} could not be mailed to ${to}:`, e);
			return {
				to,
				sent: false,
				error: `The mail server refused the message (${(e as Error).message}); download the PDF and send it yourself.`
			};
		}
	};
	const dealer = org?.email
		? await send(org.email, `/commissionings/${commissioningId}`)
		: {
				to: '',
				sent: false,
				error:
					'No contact e-mail address is on record for the site’s dealer; download the PDF and send it yourself.'
			};
	return { ...dealer, owner: ownerTo ? await send(ownerTo) : null };
}
