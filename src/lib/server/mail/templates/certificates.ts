/**
 * The wording of the e-mail that carries a commissioning certificate to the dealer and the
 * owner. The service passes the certificate's data; this returns the subject and the body.
 */
import type { CertificateData } from '$lib/server/services/certificates';
import type { Mail } from './claims';

/** A certificate was issued: what was commissioned, by whom, the warranty, and where to check it. */
export function certificateIssued(
	data: Pick<
		CertificateData,
		| 'certificateNo'
		| 'system'
		| 'site'
		| 'commissionedOn'
		| 'technicianName'
		| 'licenceNumber'
		| 'installerName'
		| 'modules'
		| 'warranty'
		| 'codesNote'
	>,
	verifyUrl: string
): Mail {
	return {
		subject: `Commissioning certificate ${data.certificateNo}: ${data.system.name} at ${data.site.name}`,
		text:
			`${data.system.name} at ${data.site.name} (${data.site.address}) was commissioned on ${data.commissionedOn} by ${data.technicianName} (licence ${data.licenceNumber}) of ${data.installerName}.\n\n` +
			`${data.modules.length} modules of ${data.system.modelCode}, ${data.system.series} in series × ${data.system.parallel} in parallel. ` +
			`Warranty from ${data.warranty.startsOn} to ${data.warranty.endsOn}.\n\nThe certificate ${data.certificateNo} is attached as a PDF. ` +
			`Its QR code opens a page that shows whether it is genuine and unchanged: ${verifyUrl}\n\n${data.codesNote}\n`
	};
}
