/**
 * The label's resolver behaviours, as the GS1-Conformant Resolver Standard states them and
 * GS1's own resolver tests (gs1/GS1_DigitalLink_Resolver_CE, tests/setup_test.py) check
 * them: 307 to the requested link type, 404 for a link type the item lacks, 400 for a path
 * that is not a Digital Link, a linkset (RFC 9264) with an anchor and every link type,
 * and an RFC 8288 Link header.
 */
import { describe, expect, it } from 'vitest';
import {
	GS1_VOC,
	chooseResolution,
	linkHeader,
	linksetDocument,
	moduleLinks,
	parseResolverPath,
	resolverDescription
} from '$lib/domain/resolver';

const BASE = 'https://reg.example';
const split = (path: string) => path.split('/').slice(2); // the route's view of /01/…

describe('parsing the path after /01/', () => {
	it('reads GS1’s example GTIN 09521234543213 and a serial (GS1 General Specifications example)', () => {
		expect(parseResolverPath(split('/01/09521234543213/21/PL48-26-000123F'))).toEqual({
			ok: true,
			gtin: '09521234543213',
			serial: 'PL48-26-000123F',
			qualifiers: {}
		});
	});
	it('pads a GTIN-13 to 14 digits and tolerates a trailing slash (resolver test suite: trailingSlash)', () => {
		const r = parseResolverPath(split('/01/9521234543213/21/X1/'));
		expect(r).toMatchObject({ ok: true, gtin: '09521234543213', serial: 'X1' });
	});
	it('accepts the qualifiers 22 and 10 before 21, in that order', () => {
		expect(parseResolverPath(split('/01/09521234543213/10/LOT01/21/X1'))).toMatchObject({
			ok: true,
			qualifiers: { '10': 'LOT01' }
		});
		expect(parseResolverPath(split('/01/09521234543213/21/X1/10/LOT01')).ok).toBe(false);
	});
	it('percent-decodes the serial: AB%2F12%2B3 is AB/12+3 (Digital Link URI syntax)', () => {
		expect(parseResolverPath(split('/01/09521234543213/21/AB%2F12%2B3'))).toMatchObject({
			serial: 'AB/12+3'
		});
	});
	const bad: [string, string, RegExp][] = [
		['bad check digit', '/01/09521234543214/21/X1', /check digit should be 3/],
		['wrong length (11 digits)', '/01/95212345432/21/X1', /11 digits; a GTIN has 8, 12, 13 or 14/],
		['wrong length (15 digits)', '/01/095212345432130/21/X1', /15 digits/],
		['missing serial', '/01/09521234543213', /add \/21\/\{serial\}/],
		['missing GTIN', '/01', /no GTIN/],
		['letters in the GTIN', '/01/0952123454321A/21/X1', /digits only/],
		['lone segment (GS1 test suite: /badrequest)', '/01/09521234543213/badrequest', /pairs/],
		['unknown qualifier', '/01/09521234543213/17/261231/21/X1', /not a key qualifier/],
		[
			'serial too long (21 characters)',
			'/01/09521234543213/21/' + 'A'.repeat(21),
			/character set 82/
		],
		['# is not in character set 82', '/01/09521234543213/21/AB%2312', /character set 82/],
		['malformed percent-encoding', '/01/09521234543213/21/%E0%A4', /empty or malformed/]
	];
	for (const [what, path, message] of bad)
		it(`400 for ${what}`, () => {
			const r = parseResolverPath(split(path));
			expect(r.ok).toBe(false);
			if (!r.ok) expect(r.message).toMatch(message);
		});
	it('answers a 200 KB path segment quickly and with a message', () => {
		const t = Date.now();
		const r = parseResolverPath(split('/01/09521234543213/21/' + 'A'.repeat(200_000)));
		expect(r.ok).toBe(false);
		expect(Date.now() - t).toBeLessThan(1000);
	});
});

describe('resolution', () => {
	const links = moduleLinks(BASE, 'PL48-26-000123F');
	it('default request → the public record (the default link)', () => {
		expect(chooseResolution(links, null, 'text/html')).toEqual({
			kind: 'redirect',
			location: `${BASE}/m/PL48-26-000123F`
		});
	});
	it('?linkType=gs1:sustainabilityInfo → the passport page, or its JSON when JSON is accepted', () => {
		expect(chooseResolution(links, 'gs1:sustainabilityInfo', '*/*')).toEqual({
			kind: 'redirect',
			location: `${BASE}/passport/PL48-26-000123F`
		});
		expect(chooseResolution(links, 'gs1:sustainabilityInfo', 'application/json')).toEqual({
			kind: 'redirect',
			location: `${BASE}/api/passport/PL48-26-000123F`
		});
	});
	it('accepts the full link type URI as well as the short form', () => {
		expect(chooseResolution(links, `${GS1_VOC}safetyInfo`, null)).toEqual({
			kind: 'redirect',
			location: `${BASE}/passport/PL48-26-000123F#safety`
		});
	});
	it('a link type the module lacks is a 404, not the default link (GS1 resolver test: gs1:safetyInfo → 404)', () => {
		const r = chooseResolution(links, 'gs1:recallStatus', null);
		expect(r.kind).toBe('no-such-link');
	});
	it('?linkType=all, or Accept: application/linkset+json, → the linkset', () => {
		expect(chooseResolution(links, 'all', null)).toEqual({ kind: 'linkset' });
		expect(chooseResolution(links, null, 'application/linkset+json')).toEqual({ kind: 'linkset' });
	});
	it('the linkset: one context object with the anchor and an array of targets per link type (RFC 9264 §4.2)', () => {
		const anchor = `${BASE}/01/09521234600022/21/PL48-26-000123F`;
		const doc = linksetDocument(anchor, links);
		expect(doc.linkset).toHaveLength(1);
		const ctx = doc.linkset[0] as Record<string, unknown>;
		expect(ctx.anchor).toBe(anchor);
		expect(
			Object.keys(ctx)
				.filter((k) => k !== 'anchor')
				.sort()
		).toEqual(
			['defaultLink', 'pip', 'safetyInfo', 'sustainabilityInfo'].map((t) => GS1_VOC + t).sort()
		);
		for (const [k, v] of Object.entries(ctx)) {
			if (k === 'anchor') continue;
			expect(Array.isArray(v)).toBe(true);
			for (const target of v as Record<string, unknown>[]) {
				// every link has a target URL, a relation type and a title (resolver test: linkMetadata)
				expect(String(target.href)).toMatch(/^https:\/\//);
				expect(String(target.title).length).toBeGreaterThan(0);
				expect(Array.isArray(target.hreflang)).toBe(true);
			}
		}
		expect((ctx[`${GS1_VOC}defaultLink`] as unknown[]).length).toBe(1);
	});
	it('the Link header points to the linkset and lists every link with rel and title (RFC 8288)', () => {
		const h = linkHeader(`${BASE}/01/09521234600022/21/X?linkType=all`, links);
		const parts = h.split(/",\s*</);
		expect(parts).toHaveLength(links.length + 1);
		expect(
			h.startsWith(
				`<${BASE}/01/09521234600022/21/X?linkType=all>; rel="linkset"; type="application/linkset+json"`
			)
		).toBe(true);
		for (const l of links)
			expect(h).toContain(`<${l.href}>; rel="${GS1_VOC}${l.linkType.slice(4)}"`);
		expect(h.match(/title="/g)).toHaveLength(links.length + 1);
	});
	it('the description file names the resolver root and the GS1 namespace', () => {
		const d = resolverDescription(BASE, 'x');
		expect(d.resolverRoot).toBe(BASE);
		expect(d.supportedPrimaryKeys).toEqual(['01']);
		expect(d.supportedLinkType).toEqual([{ namespace: GS1_VOC, prefix: 'gs1:' }]);
	});
});
