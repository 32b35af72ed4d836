/**
 * What the QR code on a module label says. A model with a GTIN gets a GS1 Digital Link
 * (GS1 Digital Link Standard: URI Syntax), so any GS1-aware scanner or resolver can read
 * it; a model without one gets Packledger's own module page URL. Both are plain web
 * addresses, so a phone camera opens them too.
 */
import { buildDigitalLink } from './gs1';

export interface QrPayloadInput {
	/** Public base URL of the register, e.g. "https://register.example"; a trailing slash is ignored. */
	baseUrl: string;
	/** GTIN-8/12/13/14 of the model, or null/undefined when it has none. */
	gtin?: string | null;
	serial: string;
}

/** The text to encode in the label's QR code. Throws Gs1Error for an invalid GTIN or serial. */
export function qrPayloadFor({ baseUrl, gtin, serial }: QrPayloadInput): string {
	if (gtin) return buildDigitalLink(baseUrl, gtin, serial);
	return `${baseUrl.replace(/\/+$/, '')}/m/${encodeURIComponent(serial)}`;
}

/** What a printed label shows; built on the server, drawn by the label component. */
export interface LabelView {
	serial: string;
	payload: string;
	qrSvg: string;
	modelCode: string;
	modelName: string;
	rated: string;
}
