/**
 * What "take offline" puts on the phone for one site: the data of each of its field pages,
 * produced by those pages' own load functions (same guards, same dealer scope, same shape
 * the page components take), plus the module models for systems designed offline.
 */
import type { RequestEvent } from '@sveltejs/kit';
import { getDb } from '$lib/server/db';
import { listModels } from '$lib/server/services/models';
import { MODELS_KEY } from '$lib/offline/views';
import { load as sitesLoad } from '../../routes/(app)/sites/+page.server';
import { load as newSiteLoad } from '../../routes/(app)/sites/new/+page.server';
import { load as siteLoad } from '../../routes/(app)/sites/[id=int]/+page.server';
import { load as newSystemLoad } from '../../routes/(app)/sites/[id=int]/systems/new/+page.server';
import { load as systemLoad } from '../../routes/(app)/systems/[id=int]/+page.server';
import { load as commissionLoad } from '../../routes/(app)/systems/[id=int]/commission/+page.server';
import { load as certificateLoad } from '../../routes/(app)/commissionings/[id=int]/+page.server';

type Data = Record<string, unknown>;
// eslint-disable-next-line @typescript-eslint/no-explicit-any
type AnyLoad = (event: any) => unknown;

/** Runs a page's load as if the page at `path` were requested by the same person. */
async function run(event: RequestEvent, load: AnyLoad, path: string, id?: number): Promise<Data> {
	const url = new URL(path, event.url);
	const out = await load({
		...event,
		url,
		params: id === undefined ? {} : { id: String(id) },
		depends: () => undefined,
		untrack: <T>(fn: () => T) => fn(),
		parent: async () => ({}),
		setHeaders: () => undefined
	});
	return (out ?? {}) as Data;
}

/** The pages of a site keyed by path, for the phone (see src/lib/offline/views.ts). */
export async function offlinePack(event: RequestEvent, siteId: number) {
	const pages: Record<string, Data> = {};
	const site = await run(event, siteLoad, `/sites/${siteId}`, siteId);
	pages[`/sites/${siteId}`] = { ...site, created: false };
	pages['/sites'] = await run(event, sitesLoad, '/sites');
	pages['/sites/new'] = await run(event, newSiteLoad, '/sites/new');
	pages[`/sites/${siteId}/systems/new`] = await run(
		event,
		newSystemLoad,
		`/sites/${siteId}/systems/new`,
		siteId
	);
	for (const s of site.systems as { id: number }[]) {
		pages[`/systems/${s.id}`] = {
			...(await run(event, systemLoad, `/systems/${s.id}`, s.id)),
			created: false
		};
		const checklist = await run(event, commissionLoad, `/systems/${s.id}/commission`, s.id);
		pages[`/systems/${s.id}/commission`] = checklist;
		const attempts = (
			checklist.target as { attempts: { id: number; certificateNo: string | null }[] }
		).attempts;
		for (const a of attempts.filter((a) => a.certificateNo))
			pages[`/commissionings/${a.id}`] = await run(
				event,
				certificateLoad,
				`/commissionings/${a.id}`,
				a.id
			);
	}
	pages[MODELS_KEY] = { models: await listModels(await getDb()) };
	return { siteId, takenAt: new Date(), pages };
}
