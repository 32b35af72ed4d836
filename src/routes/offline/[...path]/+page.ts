import { redirect } from '@sveltejs/kit';
import type { Component } from 'svelte';
import { parseFieldPath, type FieldRoute } from '$lib/offline/routes';
import { loadState } from '$lib/offline/state';
import { openCurrent } from '$lib/offline/store';
import { offlineView } from '$lib/offline/views';
import type { PageLoad } from './$types';

// The phone renders these pages itself from what it keeps: the server sends a shell without data.
export const ssr = false;

type Page = Component<{ data: Record<string, unknown>; form: unknown }>;

/** The field page components, loaded only when needed (the same components as online). */
const COMPONENTS: Record<FieldRoute['kind'], () => Promise<{ default: unknown }>> = {
	sites: () => import('../../(app)/sites/+page.svelte'),
	newSite: () => import('../../(app)/sites/new/+page.svelte'),
	site: () => import('../../(app)/sites/[id=int]/+page.svelte'),
	newSystem: () => import('../../(app)/sites/[id=int]/systems/new/+page.svelte'),
	system: () => import('../../(app)/systems/[id=int]/+page.svelte'),
	commission: () => import('../../(app)/systems/[id=int]/commission/+page.svelte'),
	certificate: () => import('../../(app)/commissionings/[id=int]/+page.svelte')
};

export const load: PageLoad = async ({ params, url, parent, depends }) => {
	depends('offline:store');
	const { user } = await parent();
	const current = await openCurrent();
	if (!user || !current || current.user.id !== user.id) {
		current?.db.close();
		if (navigator.onLine) redirect(303, `/signin?next=${encodeURIComponent(url.pathname)}`);
		return { kind: 'signin' as const };
	}
	const state = await loadState(current.db);
	current.db.close();
	const route = parseFieldPath('/' + params.path);
	if (!route)
		return {
			kind: 'list' as const,
			needs: params.path ? `/${params.path}` : url.searchParams.get('needs'),
			ops: state.ops,
			pages: [...state.pages.values()]
				.filter((p) => !p.path.startsWith('#'))
				.map((p) => ({ path: p.path, savedAt: p.savedAt, title: titleOf(p.path, p.data) }))
		};
	const view = offlineView(state, route, navigator.onLine);
	if ('redirect' in view) redirect(307, view.redirect);
	if ('missing' in view) return { kind: 'missing' as const, message: view.missing };
	const data = { ...view.data, user };
	if ('created' in data) data.created = url.searchParams.has('created');
	const component = (await COMPONENTS[route.kind]()).default as Page;
	return {
		kind: 'page' as const,
		route,
		component,
		page: data,
		pending: view.pending,
		savedAt: view.savedAt
	};
};

const KIND_LABELS: Record<FieldRoute['kind'], string> = {
	sites: 'Sites',
	newSite: 'New site',
	site: 'Site',
	newSystem: 'New system at',
	system: 'System',
	commission: 'Checklist of',
	certificate: 'Certificate'
};

function titleOf(path: string, data: Record<string, unknown>): string {
	const d = data as {
		site?: { name?: string };
		system?: { name?: string };
		target?: { system?: { name?: string } };
		certificate?: { certificateNo?: string };
	};
	const kind = parseFieldPath(path)?.kind;
	if (!kind) return path;
	const name =
		d.certificate?.certificateNo ??
		d.target?.system?.name ??
		d.system?.name ??
		(kind === 'sites' || kind === 'newSite' ? undefined : d.site?.name);
	return name ? `${KIND_LABELS[kind]} ${name}` : KIND_LABELS[kind];
}
