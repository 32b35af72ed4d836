/**
 * The label's GS1 Digital Link answered like a GS1-conformant resolver (GS1-Conformant
 * Resolver Standard; behaviours as GS1's own resolver tests in
 * gs1/GS1_DigitalLink_Resolver_CE `tests/` check them): the default request redirects
 * (307) to the default link; `?linkType=gs1:…` redirects to that link, or answers 404 when
 * the item has no such link; `?linkType=all` or `Accept: application/linkset+json`
 * answers the item's linkset (RFC 9264, media type application/linkset+json); every
 * resolution carries an RFC 8288 `Link` header listing the links and pointing to the
 * linkset; a path that is not a valid Digital Link is a 400 with the reason.
 *
 * Link types, from the GS1 Web Vocabulary, and why each fits a battery module:
 *   gs1:defaultLink, gs1:pip — the module's public record is its product information page;
 *   gs1:sustainabilityInfo — the battery passport (carbon footprint, recycled content,
 *     end-of-life information), as a page and as JSON;
 *   gs1:safetyInfo — the passport's safety section (hazardous substances, extinguishing
 *     agents, handling cautions).
 * Not offered, because the register has nothing true to point at: gs1:certificationInfo
 * (no public certificate per module), gs1:recallStatus (no recall record yet),
 * gs1:instructions (no installation manual in the register).
 */
import { isValidGs1Serial } from './gs1';
import { gs1CheckDigit } from './gs1';

export const GS1_VOC = 'https://gs1.org/voc/';
export const LINKSET_MEDIA_TYPE = 'application/linkset+json';

export interface ResolverLink {
	/** Short form, e.g. gs1:pip. */
	linkType: string;
	href: string;
	title: string;
	type: string;
	hreflang: string[];
}

export type ParsedPath =
	| { ok: true; gtin: string; serial: string; qualifiers: Record<string, string> }
	| { ok: false; message: string };

const GTIN_LENGTHS = [8, 12, 13, 14];
const MAX_SEGMENT = 100;

function decode(segment: string): string | null {
	if (segment.length > MAX_SEGMENT * 3) return null;
	try {
		return decodeURIComponent(segment);
	} catch {
		return null;
	}
}

/**
 * Reads the path after `/01/` (still percent-encoded, split on "/"): GTIN, then the key
 * qualifiers 22 (consumer product variant) and 10 (lot) in that order if present, then
 * 21 (serial), which this register needs. A trailing slash is tolerated.
 */
export function parseResolverPath(segments: string[]): ParsedPath {
	const parts = segments.at(-1) === '' ? segments.slice(0, -1) : segments;
	if (parts.length === 0 || parts[0] === '')
		return { ok: false, message: 'The Digital Link has no GTIN after /01/.' };
	const gtinRaw = decode(parts[0]);
	if (gtinRaw === null || !/^\d{1,30}$/.test(gtinRaw))
		return {
			ok: false,
			message: `The GTIN “${(gtinRaw ?? parts[0]).slice(0, 30)}” must be digits only.`
		};
	if (!GTIN_LENGTHS.includes(gtinRaw.length))
		return {
			ok: false,
			message: `The GTIN ${gtinRaw} has ${gtinRaw.length} digits; a GTIN has 8, 12, 13 or 14.`
		};
	const expected = gs1CheckDigit(gtinRaw.slice(0, -1));
	if (expected !== Number(gtinRaw.at(-1)))
		return {
			ok: false,
			message: `The GTIN ${gtinRaw} ends in ${gtinRaw.at(-1)}, but its check digit should be ${expected}.`
		};
	const rest = parts.slice(1);
	if (rest.length % 2 !== 0)
		return {
			ok: false,
			message: `After the GTIN the path must come in pairs of application identifier and value; “/${rest.at(-1)!.slice(0, 30)}” stands alone.`
		};
	const order = ['22', '10', '21'];
	const qualifiers: Record<string, string> = {};
	let last = -1;
	for (let i = 0; i < rest.length; i += 2) {
		const ai = rest[i];
		const at = order.indexOf(ai);
		if (at < 0)
			return {
				ok: false,
				message: `“${ai.slice(0, 10)}” is not a key qualifier of a GTIN here; use 22, 10 and 21 in that order.`
			};
		if (at <= last)
			return { ok: false, message: 'Key qualifiers must come in the order 22, 10, 21, each once.' };
		last = at;
		const value = decode(rest[i + 1]);
		if (value === null || value === '' || value.length > MAX_SEGMENT)
			return { ok: false, message: `The value after /${ai}/ is empty or malformed.` };
		qualifiers[ai] = value;
	}
	const serial = qualifiers['21'];
	if (serial === undefined)
		return {
			ok: false,
			message: `This resolver answers for serialised modules: add /21/{serial} after the GTIN ${gtinRaw}.`
		};
	if (!isValidGs1Serial(serial))
		return {
			ok: false,
			message: `The serial “${serial.slice(0, 30)}” is not a GS1 serial: 1–20 characters of GS1 character set 82.`
		};
	delete qualifiers['21'];
	return { ok: true, gtin: gtinRaw.padStart(14, '0'), serial, qualifiers };
}

/** The links a module offers, as listed above. `base` is the register's origin. */
export function moduleLinks(base: string, serial: string): ResolverLink[] {
	const s = encodeURIComponent(serial);
	const html = (linkType: string, path: string, title: string): ResolverLink => ({
		linkType,
		href: `${base}${path}`,
		title,
		type: 'text/html',
		hreflang: ['en']
	});
	return [
		html('gs1:defaultLink', `/m/${s}`, `Public record of module ${serial}`),
		html('gs1:pip', `/m/${s}`, `Product information: public record of module ${serial}`),
		html('gs1:sustainabilityInfo', `/passport/${s}`, `Battery passport of module ${serial}`),
		{
			linkType: 'gs1:sustainabilityInfo',
			href: `${base}/api/passport/${s}`,
			title: `Battery passport of module ${serial} (JSON, Battery Pass data model v1.2.0)`,
			type: 'application/json',
			hreflang: ['en']
		},
		html('gs1:safetyInfo', `/passport/${s}#safety`, `Safety information for module ${serial}`)
	];
}

/** Full link relation URI of a link type: gs1:pip → https://gs1.org/voc/pip. */
export const relationUri = (linkType: string) =>
	linkType.startsWith('gs1:') ? GS1_VOC + linkType.slice(4) : linkType;

/** Short form of a requested link type, accepting the full URI too. */
export function shortLinkType(requested: string): string {
	return requested.startsWith(GS1_VOC) ? 'gs1:' + requested.slice(GS1_VOC.length) : requested;
}

/** The RFC 9264 linkset document of one item (section 4.2: one link context object). */
export function linksetDocument(anchor: string, links: ResolverLink[]) {
	const context: Record<string, unknown> = { anchor };
	for (const l of links) {
		const rel = relationUri(l.linkType);
		const targets = (context[rel] as unknown[] | undefined) ?? [];
		targets.push({ href: l.href, title: l.title, type: l.type, hreflang: l.hreflang });
		context[rel] = targets;
	}
	return { linkset: [context] };
}

const quoted = (s: string) => `"${s.replace(/["\\\r\n]/g, '')}"`;

/** RFC 8288 Link header: the linkset first, then every link with its relation type and title. */
export function linkHeader(linksetUrl: string, links: ResolverLink[]): string {
	return [
		`<${linksetUrl}>; rel="linkset"; type=${quoted(LINKSET_MEDIA_TYPE)}; title=${quoted('All links for this item')}`,
		...links.map(
			(l) =>
				`<${l.href}>; rel=${quoted(relationUri(l.linkType))}; type=${quoted(l.type)}; hreflang=${quoted(l.hreflang.join(' '))}; title=${quoted(l.title)}`
		)
	].join(', ');
}

export type Resolution =
	| { kind: 'redirect'; location: string }
	| { kind: 'linkset' }
	| { kind: 'no-such-link'; message: string };

/** Whether the Accept header asks for the linkset media type (RFC 9264 §7). */
export function wantsLinkset(accept: string | null): boolean {
	return !!accept && accept.slice(0, 1000).toLowerCase().includes(LINKSET_MEDIA_TYPE);
}

/**
 * What to answer for a request with an optional linkType and Accept header. For a link
 * type with several targets, the one whose media type the client accepts is chosen,
 * else the first (HTML).
 */
export function chooseResolution(
	links: ResolverLink[],
	linkType: string | null,
	accept: string | null
): Resolution {
	const lt = linkType === null ? null : shortLinkType(linkType.trim());
	if (lt === 'all' || lt === 'linkset' || (lt === null && wantsLinkset(accept)))
		return { kind: 'linkset' };
	const wanted = lt ?? 'gs1:defaultLink';
	const candidates = links.filter((l) => l.linkType === wanted);
	if (candidates.length === 0)
		return {
			kind: 'no-such-link',
			message: `This module has no ${wanted.slice(0, 60)} link. Available: ${[...new Set(links.map((l) => l.linkType))].join(', ')}.`
		};
	const acc = (accept ?? '').slice(0, 1000).toLowerCase();
	const byType = candidates.find((c) => acc.includes(c.type) && c.type !== 'text/html');
	return { kind: 'redirect', location: (byType ?? candidates[0]).href };
}

/** The resolver description served at /.well-known/gs1resolver. */
export function resolverDescription(origin: string, name: string) {
	return {
		name,
		resolverRoot: origin,
		supportedPrimaryKeys: ['01'],
		supportedLinkType: [{ namespace: GS1_VOC, prefix: 'gs1:' }],
		linkTypeDefaultCanBeAll: false,
		supportedContextValuesEnumerated: [],
		linkTypesOffered: [...new Set(moduleLinks(origin, 'x').map((l) => l.linkType))],
		keyQualifiersAccepted: ['22', '10', '21'],
		note: 'Answers for serialised modules: /01/{GTIN}/21/{serial}. linkType=all or Accept: application/linkset+json gives the linkset (RFC 9264).'
	};
}
