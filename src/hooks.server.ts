import { sequence } from '@sveltejs/kit/hooks';
import type { ServerInit } from '@sveltejs/kit';
import { authHandle, standardAuthEndpoints } from '$lib/server/auth';
import { actorHandle, assertAuthSecret, contextHandle } from '$lib/server/hooks';
import { publicPage } from '$lib/server/public-page';
import { compressHtml } from '$lib/server/compression';
import { getDb } from '$lib/server/db';
import { startScheduler } from '$lib/server/scheduler';
import { securityHeaders } from '$lib/server/security-headers';
import { originCheck } from '$lib/server/origin-check';
import { admissionHandle } from '$lib/server/admission';

export const init: ServerInit = async () => {
	assertAuthSecret();
	const db = await getDb(); // applies pending migrations, so an empty database is ready at start-up
	startScheduler(db); // campaign reminders, one server per round (a lease in the database)
};

export const handle = sequence(
	admissionHandle,
	compressHtml,
	securityHeaders,
	originCheck,
	contextHandle,
	standardAuthEndpoints,
	authHandle,
	actorHandle,
	publicPage
);
