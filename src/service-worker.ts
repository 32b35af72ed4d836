/// <reference types="@sveltejs/kit" />
/// <reference no-default-lib="true"/>
/// <reference lib="esnext" />
/// <reference lib="webworker" />
/**
 * Packledger's service worker (SvelteKit's own, `$service-worker`): field work without a signal.
 *
 * - Precaches the offline pages' code and the static files (`build`, `files`, less what
 *   src/lib/offline/precache.ts leaves to first use: every other page's code) per version, and the offline page shell; `npx tsx scripts/precache-size.ts`
 *   says how much that is.
 * - Never caches an API answer, an HTML page of a signed-in user, or any POST. The only
 *   user-specific thing it keeps is the `/offline` shell's layout data (name and role of the
 *   person signed in), in a cache the page deletes at sign-out and when someone else signs in;
 *   the pages' own data lives in that user's IndexedDB database (src/lib/offline/store.ts).
 * - Offline, the field pages (sites, a site, a system, the checklist, a certificate) open
 *   under `/offline/…` from what the phone keeps; their forms are answered on the phone and
 *   queued for `POST /api/sync`. Any other page answers that it needs a connection.
 */
import { build, files, version } from '$service-worker';
import { stringify } from 'devalue';
import { OFFLINE_PREFIX, parseFieldPath, type FieldRoute } from '$lib/offline/routes';
import { offlineAction } from '$lib/offline/actions';
import { loadState } from '$lib/offline/state';
import { addOp, LAYOUT_CACHE, openCurrent } from '$lib/offline/store';
import { OFFLINE_CODE_LIST, precached } from '$lib/offline/precache';
import { MODELS_KEY } from '$lib/offline/views';
import { checkDesign, type DesignModule } from '$lib/domain/design-check';
import { designCheckRequestSchema } from '$lib/schemas/site';
import { deviceCalendarDay } from '$lib/domain/calendar';

const sw = self as unknown as ServiceWorkerGlobalScope;
const APP_CACHE = `pl-app-${version}`;
const SHELL_URL = OFFLINE_PREFIX;
const ASSETS = new Set([...build, ...files]);
const NETWORK_TIMEOUT_MS = 10_000;

/** The offline pages' scripts and styles, as the build listed them; null (store all) if unreadable. */
async function offlineCode(): Promise<Set<string> | null> {
	try {
		const res = await fetch(OFFLINE_CODE_LIST, { cache: 'no-cache' });
		return res.ok ? new Set((await res.json()) as string[]) : null;
	} catch {
		return null;
	}
}

sw.addEventListener('install', (event) => {
	event.waitUntil(
		(async () => {
			const cache = await caches.open(APP_CACHE);
			const code = await offlineCode();
			await cache.addAll([...ASSETS].filter((path) => precached(path, code)));
			// The shell has no data in it (ssr = false), so one copy serves every offline page.
			const shell = await fetch(SHELL_URL, { credentials: 'omit' });
			if (shell.ok) await cache.put(SHELL_URL, shell);
			await sw.skipWaiting();
		})()
	);
});

sw.addEventListener('activate', (event) => {
	event.waitUntil(
		(async () => {
			for (const key of await caches.keys())
				if (key.startsWith('pl-app-') && key !== APP_CACHE) await caches.delete(key);
			await sw.clients.claim();
		})()
	);
});

/** Network, but give up after a while: a poor signal should not leave the technician waiting. */
async function network(request: Request): Promise<Response> {
	const controller = new AbortController();
	const timer = setTimeout(() => controller.abort(), NETWORK_TIMEOUT_MS);
	try {
		return await fetch(request, { signal: controller.signal });
	} finally {
		clearTimeout(timer);
	}
}

const redirectTo = (location: string) =>
	Response.redirect(new URL(location, sw.location.origin).href, 303);
const offlinePathOf = (url: URL) => OFFLINE_PREFIX + url.pathname + url.search;
const needsConnection = (url: URL) => `${OFFLINE_PREFIX}?needs=${encodeURIComponent(url.pathname)}`;
const dataUrlPath = (url: URL) => url.pathname.slice(0, -'/__data.json'.length) || '/';
const isLocalRef = (r: FieldRoute | null) => !!r && 'ref' in r && typeof r.ref === 'string';

async function shell(): Promise<Response> {
	const cache = await caches.open(APP_CACHE);
	return (
		(await cache.match(SHELL_URL)) ??
		new Response('Packledger is not on this phone yet: open it once with a connection.', {
			status: 503,
			headers: { 'content-type': 'text/plain; charset=utf-8' }
		})
	);
}

async function navigate(request: Request, url: URL): Promise<Response> {
	const route = parseFieldPath(url.pathname);
	if (url.pathname === OFFLINE_PREFIX || url.pathname.startsWith(OFFLINE_PREFIX + '/')) {
		try {
			const res = await network(request);
			if (res.ok) return res;
		} catch {
			/* offline: the shell below */
		}
		return shell();
	}
	// A record made on the phone exists only here until it is sent.
	if (isLocalRef(route)) return redirectTo(offlinePathOf(url));
	try {
		return await network(request);
	} catch {
		return redirectTo(route ? offlinePathOf(url) : needsConnection(url));
	}
}

/** SvelteKit's data request of a client-side navigation (`…/__data.json`). */
async function pageData(event: FetchEvent, url: URL): Promise<Response> {
	const { request } = event;
	const path = dataUrlPath(url);
	const isShell = path === OFFLINE_PREFIX || path.startsWith(OFFLINE_PREFIX + '/');
	try {
		const res = await network(request);
		if (isShell && res.ok) {
			const copy = res.clone();
			event.waitUntil(
				caches.open(LAYOUT_CACHE).then((c) => c.put(SHELL_URL + '/__data.json', copy))
			);
		}
		return res;
	} catch {
		if (isShell) {
			const cached = await (await caches.open(LAYOUT_CACHE)).match(SHELL_URL + '/__data.json');
			if (cached) return cached;
			return Response.json(
				{ message: 'No connection, and this phone has not been used for field work offline yet.' },
				{ status: 503 }
			);
		}
		const target = new URL(path + url.search, url);
		target.searchParams.delete('x-sveltekit-invalidated');
		const route = parseFieldPath(path);
		const location = route ? OFFLINE_PREFIX + path + target.search : needsConnection(target);
		return new Response(JSON.stringify({ type: 'redirect', location }) + '\n', {
			headers: { 'content-type': 'application/json' }
		});
	}
}

/** A field form's action answered on the phone and queued for sync. */
async function actOffline(request: Request, url: URL, route: FieldRoute): Promise<Response> {
	const action = [...url.searchParams.keys()].find((k) => k.startsWith('/'))?.slice(1) ?? 'default';
	const current = await openCurrent();
	if (!current)
		return Response.json(
			{
				type: 'failure',
				status: 401,
				data: stringify({ message: 'Sign in once with a connection first.' })
			},
			{ headers: { 'x-sveltekit-action': 'true' } }
		);
	const form = await request.formData();
	const state = await loadState(current.db);
	const out = offlineAction(state, route, action, form, {
		id: crypto.randomUUID(),
		today: deviceCalendarDay(new Date()),
		origin: sw.location.origin
	});
	if (out.add) await addOp(current.db, out.add);
	if (out.drop) await current.db.delete('ops', out.drop);
	current.db.close();
	if (out.add || out.drop)
		for (const c of await sw.clients.matchAll()) c.postMessage({ type: 'queued' });
	const a = out.answer;
	const body = a.type === 'redirect' ? a : { ...a, data: stringify(a.data) };
	return Response.json(body, { headers: { 'x-sveltekit-action': 'true' } });
}

/**
 * `POST /api/design-check` without a network: the same pure check, run here on the models the
 * phone keeps, so the system form still shows its live figures. Computed, never stored.
 */
async function designCheckHere(request: Request): Promise<Response> {
	const parsed = designCheckRequestSchema.safeParse(await request.json().catch(() => null));
	if (!parsed.success)
		return Response.json(
			{
				message: 'The design cannot be checked.',
				issues: parsed.error.issues.map((i) => ({ path: i.path.join('.'), message: i.message }))
			},
			{ status: 400 }
		);
	const current = await openCurrent();
	const kept = current ? await current.db.get('pages', MODELS_KEY) : undefined;
	current?.db.close();
	const models = (kept?.data.models ?? []) as (DesignModule & {
		code: string;
		retiredAt?: unknown;
	})[];
	const req = parsed.data;
	const model = req.model ? models.find((m) => m.code === req.model) : undefined;
	const module = req.module ?? model;
	if (!module)
		return Response.json(
			{
				message: `Model ${req.model} is not on this phone: take a site offline with a connection first.`
			},
			{ status: 404 }
		);
	return Response.json(
		checkDesign({
			module,
			series: req.series,
			parallel: req.parallel,
			inverter: req.inverter,
			targetEnergyKWh: req.targetEnergyKWh,
			variants: model
				? models.filter((m) => !m.retiredAt).map((m) => ({ code: m.code, module: m }))
				: []
		})
	);
}

async function post(event: FetchEvent, url: URL): Promise<Response> {
	if (url.pathname === '/api/design-check') {
		const copy = event.request.clone();
		try {
			return await fetch(event.request);
		} catch {
			return designCheckHere(copy);
		}
	}
	const path = url.pathname.startsWith(OFFLINE_PREFIX + '/')
		? url.pathname.slice(OFFLINE_PREFIX.length)
		: url.pathname;
	const route = parseFieldPath(path);
	const isAction = [...url.searchParams.keys()].some((k) => k.startsWith('/'));
	if (!route || !isAction) return fetch(event.request);
	if (path !== url.pathname || isLocalRef(route)) return actOffline(event.request, url, route);
	// A field form on a page loaded online: if the signal is gone, it is kept like an offline one.
	const copy = event.request.clone();
	try {
		return await fetch(event.request);
	} catch {
		return actOffline(copy, url, route);
	}
}

/** A built file: from the cache, or fetched once and kept (built files never change under a name). */
async function asset(event: FetchEvent, path: string): Promise<Response> {
	const cache = await caches.open(APP_CACHE);
	const hit = await cache.match(path);
	if (hit) return hit;
	const res = await fetch(event.request);
	// Stored alongside, not before answering: awaiting the copy would stall the page's own read.
	if (res.ok) event.waitUntil(cache.put(path, res.clone()));
	return res;
}

/** A photo taken offline, shown from the phone until it is sent. */
async function localPhoto(id: string): Promise<Response> {
	const current = await openCurrent();
	const op = current ? await current.db.get('ops', id) : undefined;
	current?.db.close();
	if (!op?.blob) return new Response('Not on this phone.', { status: 404 });
	return new Response(op.blob, { headers: { 'content-type': op.blob.type || 'image/jpeg' } });
}

sw.addEventListener('fetch', (event) => {
	const { request } = event;
	const url = new URL(request.url);
	if (url.origin !== sw.location.origin) return;
	if (request.method === 'POST') {
		event.respondWith(post(event, url));
		return;
	}
	if (request.method !== 'GET') return;
	if (ASSETS.has(url.pathname)) {
		event.respondWith(asset(event, url.pathname));
		return;
	}
	const photo = /^\/api\/attachments\/([0-9a-f-]{36})$/.exec(url.pathname);
	if (photo) {
		event.respondWith(localPhoto(photo[1]));
		return;
	}
	if (url.pathname.endsWith('/__data.json')) {
		event.respondWith(pageData(event, url));
		return;
	}
	if (request.mode === 'navigate') event.respondWith(navigate(request, url));
	// Everything else (API answers included) goes to the network and is never stored.
});
