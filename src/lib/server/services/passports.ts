import { asc, eq } from 'drizzle-orm';
import type { Db } from '$lib/server/db';
import {
	claimModules,
	claims,
	factoryTests,
	moduleEvents,
	moduleModels,
	modules,
	organisations
} from '$lib/server/db/schema';
import type { Actor } from '$lib/server/actor';
import { NotFoundError } from '$lib/server/errors';
import { buildDigitalLink } from '$lib/domain/gs1';
import {
	buildPassport,
	type CapacityEvidence,
	type NegativeEvent,
	type PassportTier,
	type TemperatureEvidence,
	type ThroughputEvidence
} from '$lib/domain/passport';
import { findModule } from './modules';
import { getModelPassportItems } from './passport-items';
import { parseEvidence, perModuleThroughput } from './claim-assessment';
import { modulesInSystem } from './claim-system-facts';
import { useGrant } from './passport-grants';
import { assemblerCalendar } from './calendar';
import { calendarDay } from '$lib/domain/calendar';

type ModuleRow = typeof modules.$inferSelect;
type ModelRow = typeof moduleModels.$inferSelect;

/** Who asks for a passport: a signed-in actor (or nobody) and, optionally, an access link's secret. */
export interface PassportViewer {
	actor: Actor | null;
	access?: string | null;
}

/** Timeline kinds that are negative events in the sense of Annex XIII §4(d). */
const NEGATIVE_KINDS = new Set(['returned', 'replaced', 'scrapped', 'service_notice']);

/**
 * The tier a viewer gets for a module, decided here on the server: the module's own dealer
 * and the assembler's staff get everything ("full"); a valid access link for this module
 * or its cell lot gets the condition ("restricted"); everyone else, another dealer
 * included, gets the public tier exactly as an anonymous visitor does.
 */
async function tierFor(
	db: Db,
	viewer: PassportViewer,
	mod: ModuleRow,
	now: Date
): Promise<PassportTier> {
	if (viewer.actor) {
		const mine = await findModule(db, viewer.actor, mod.serial).then(
			() => true,
			(e) => (e instanceof NotFoundError ? false : Promise.reject(e))
		);
		if (mine) return 'full';
	}
	if (viewer.access) {
		await useGrant(db, viewer.access, mod, viewer.actor, now);
		return 'restricted';
	}
	return 'public';
}

async function conditionEvidence(db: Db, mod: ModuleRow) {
	const capacity: CapacityEvidence[] = [];
	const throughput: ThroughputEvidence[] = [];
	const temperatures: TemperatureEvidence[] = [];
	const negativeEvents: NegativeEvent[] = [];
	const tests = await db
		.select()
		.from(factoryTests)
		.where(eq(factoryTests.moduleId, mod.id))
		.orderBy(asc(factoryTests.testedAt));
	const { timeZone } = await assemblerCalendar(db);
	for (const t of tests) {
		capacity.push({
			at: t.testedAt,
			capacityAh: t.capacityAh,
			temperatureC: t.ambientC,
			source: `factory test ${calendarDay(t.testedAt, timeZone)}`
		});
		if (t.outcome === 'fail')
			negativeEvents.push({ at: t.testedAt, text: 'Failed its factory test.' });
	}
	const claimRows = await db
		.select({ claim: claims })
		.from(claimModules)
		.innerJoin(claims, eq(claimModules.claimId, claims.id))
		.where(eq(claimModules.moduleId, mod.id));
	for (const { claim } of claimRows) {
		const e = parseEvidence(claim.evidence);
		const source = `warranty claim ${claim.reference}`;
		const at = claim.filedAt;
		if (e.measuredCapacityAh !== undefined)
			capacity.push({
				at,
				capacityAh: e.measuredCapacityAh,
				temperatureC: e.measuredAtC ?? null,
				source
			});
		const wh = perModuleThroughput(e, await modulesInSystem(db, claim.systemId));
		if (wh !== null) throughput.push({ at, moduleWh: wh, cycles: null, source });
		else if (e.cycleCount !== undefined)
			throughput.push({ at, moduleWh: null, cycles: e.cycleCount, source });
		if (e.avgCellTempC !== undefined || e.maxCellTempC !== undefined)
			temperatures.push({
				at,
				averageCellC: e.avgCellTempC ?? null,
				maximumCellC: e.maxCellTempC ?? null,
				source
			});
		negativeEvents.push({ at, text: `Warranty claim ${claim.reference}: ${claim.fault}` });
		if (e.eventsOutsideLimits)
			negativeEvents.push({ at, text: `Reported outside the limits: ${e.eventsOutsideLimits}` });
	}
	const events = await db
		.select()
		.from(moduleEvents)
		.where(eq(moduleEvents.moduleId, mod.id))
		.orderBy(asc(moduleEvents.at), asc(moduleEvents.id));
	for (const ev of events)
		if (NEGATIVE_KINDS.has(ev.kind)) negativeEvents.push({ at: ev.at, text: ev.summary });
	return { evidence: { capacity, throughput, temperatures, negativeEvents }, events };
}

/** Everything a passport is built from, loaded once per model for exports. */
export interface PassportContext {
	baseUrl: string;
	issuer: string;
	models: Map<
		number,
		{ model: ModelRow; items: Awaited<ReturnType<typeof getModelPassportItems>> }
	>;
}

export async function passportContext(db: Db, baseUrl: string): Promise<PassportContext> {
	const [assembler] = await db
		.select({ name: organisations.name })
		.from(organisations)
		.where(eq(organisations.kind, 'assembler'))
		.limit(1);
	return { baseUrl, issuer: assembler?.name ?? 'Assembler', models: new Map() };
}

async function modelOf(db: Db, ctx: PassportContext, modelId: number) {
	let entry = ctx.models.get(modelId);
	if (!entry) {
		const [model] = await db.select().from(moduleModels).where(eq(moduleModels.id, modelId));
		entry = { model, items: await getModelPassportItems(db, modelId) };
		ctx.models.set(modelId, entry);
	}
	return entry;
}

/** Builds the passport of one module row at a given tier (the tier decided by the caller). */
export async function passportForRow(
	db: Db,
	ctx: PassportContext,
	mod: ModuleRow,
	tier: PassportTier,
	now: Date
) {
	const { model, items } = await modelOf(db, ctx, mod.modelId);
	const s = encodeURIComponent(mod.serial);
	const cond = tier === 'public' ? null : await conditionEvidence(db, mod);
	return buildPassport({
		tier,
		serial: mod.serial,
		links: {
			record: `${ctx.baseUrl}/m/${s}`,
			passport: `${ctx.baseUrl}/passport/${s}`,
			json: `${ctx.baseUrl}/api/passport/${s}`,
			digitalLink: model.gtin ? buildDigitalLink(ctx.baseUrl, model.gtin, mod.serial) : null
		},
		issuer: { name: ctx.issuer },
		model,
		items,
		module: {
			builtAt: mod.builtAt,
			commissionedAt: mod.commissionedAt,
			state: mod.state,
			lifecycleStatus: mod.lifecycleStatus
		},
		evidence: cond?.evidence,
		history:
			tier === 'full'
				? cond!.events.map((e) => ({
						at: e.at,
						kind: e.kind,
						summary: e.summary,
						by: e.actorLabel
					}))
				: undefined,
		now
	});
}

/**
 * The passport of a module for whoever asks, at the tier the server decides for them.
 * An unknown serial is a NotFoundError; an invalid access link a ForbiddenError saying why.
 */
export async function getPassport(
	db: Db,
	viewer: PassportViewer,
	serialText: string,
	baseUrl: string,
	now = new Date()
) {
	const mod = await findModule(db, null, serialText);
	const tier = await tierFor(db, viewer, mod, now);
	return passportForRow(db, await passportContext(db, baseUrl), mod, tier, now);
}
