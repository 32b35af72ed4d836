/**
 * The workshop's actions on a module that failed or was registered wrongly: rework (back to
 * built, waiting for a retest; the earlier results stay in the history), scrap (with a reason;
 * passport status waste) and the correction of a build record (audited, never deleted). The
 * factory tests of a module with their measured values, newest first.
 */
import { and, desc, eq, inArray } from 'drizzle-orm';
import type { Db, Tx } from '$lib/server/db';
import { writeTx } from '$lib/server/db';
import { factoryTests, moduleCellLots, modules } from '$lib/server/db/schema';
import { assertCan, type Actor } from '$lib/server/actor';
import { checkRule, ConflictError } from '$lib/server/errors';
import { assertTransition, endOf, mayMove, statesFrom } from '$lib/domain/module-lifecycle';
import { statusAfterRework } from '$lib/domain/module-status';
import { withoutFullStop } from '$lib/domain/module-condition';
import { STATE_LABELS } from '$lib/module-states';
import type { CorrectBuildInput, ReworkInput, ScrapInput } from '$lib/schemas/workshop';
import { recordAudit, recordEvent } from './audit';
import { findModule } from './modules';

const stateWords = (s: string) => (STATE_LABELS[s] ?? s).toLowerCase();
/** A person's words as one sentence: no doubled full stop when they ended with one. */
const asSentence = (t: string) => `${withoutFullStop(t)}.`;

type ModuleRow = typeof modules.$inferSelect;

/** What each workshop move needs of a module's state, in the words of the refusal. */
const HELD_FOR = {
	scrap:
		'only a module held in the workshop (built, failed, in stock, or returned and inspected) can be scrapped.',
	correctBuild:
		'a build record is corrected only while the module is in the workshop (built, failed or in stock).'
} as const;

/**
 * The module the person may see, checked for the move: a refusal says where the module is and
 * what the move needs.
 */
async function moduleForMove(
	db: Db,
	actor: Actor,
	serial: string,
	move: keyof typeof HELD_FOR
): Promise<ModuleRow> {
	const mod = await findModule(db, actor, serial);
	if (!mayMove(mod.state, move))
		throw new ConflictError(`${mod.serial} is ${stateWords(mod.state)}: ${HELD_FOR[move]}`);
	return mod;
}

/**
 * The rework's writes inside the caller's transaction (the returns desk adds its own): the
 * module back to built with no test outcome, the timeline and the audit. Returns the passport
 * status it now has.
 */
export async function applyRework(tx: Tx, actor: Actor, mod: ModuleRow, work: string, now: Date) {
	const lifecycleStatus = statusAfterRework(mod.commissionedAt !== null, mod.lifecycleStatus);
	const done = await tx
		.update(modules)
		.set({ state: endOf('rework'), testOutcome: null, lifecycleStatus, updatedAt: now })
		.where(and(eq(modules.id, mod.id), inArray(modules.state, statesFrom('rework'))))
		.returning({ id: modules.id });
	if (!done.length) throw new ConflictError(`${mod.serial} changed meanwhile; reload the page.`);
	await recordEvent(tx, actor, {
		moduleId: mod.id,
		kind: 'reworked',
		summary: `Reworked: ${asSentence(work)} Waits for a retest.`,
		detail: { work, from: mod.state },
		at: now
	});
	await recordAudit(tx, actor, {
		action: 'module.rework',
		entity: 'module',
		entityId: mod.serial,
		before: {
			state: mod.state,
			testOutcome: mod.testOutcome,
			lifecycleStatus: mod.lifecycleStatus
		},
		after: { state: 'built', testOutcome: null, lifecycleStatus, work },
		at: now
	});
	return lifecycleStatus;
}

/** The scrapping's writes inside the caller's transaction: state, reason, timeline, audit. */
export async function applyScrap(tx: Tx, actor: Actor, mod: ModuleRow, reason: string, now: Date) {
	const done = await tx
		.update(modules)
		.set({ state: endOf('scrap'), scrapReason: reason, scrappedAt: now, updatedAt: now })
		.where(and(eq(modules.id, mod.id), inArray(modules.state, statesFrom('scrap'))))
		.returning({ id: modules.id });
	if (!done.length) throw new ConflictError(`${mod.serial} changed meanwhile; reload the page.`);
	await recordEvent(tx, actor, {
		moduleId: mod.id,
		kind: 'scrapped',
		summary: `Scrapped: ${reason}`,
		detail: { reason, from: mod.state },
		at: now
	});
	await recordAudit(tx, actor, {
		action: 'module.scrap',
		entity: 'module',
		entityId: mod.serial,
		before: { state: mod.state },
		after: { state: 'scrapped', reason, passportStatus: 'waste' },
		at: now
	});
}

/**
 * Records the rework of a failed (or returned and inspected) module: what was done. The
 * module goes back to built and waits for a retest, whose result supersedes the last; the
 * earlier results stay. A module that had been in service comes back remanufactured.
 */
export async function reworkModule(
	db: Db,
	actor: Actor,
	serial: string,
	input: ReworkInput,
	now = new Date()
) {
	assertCan(actor, 'reworkModule', 'Rework is recorded by the workshop.');
	const mod = await findModule(db, actor, serial);
	checkRule(() => assertTransition(mod.state, 'rework', endOf('rework')));
	const lifecycleStatus = await writeTx(db, (tx) => applyRework(tx, actor, mod, input.work, now));
	return { serial: mod.serial, state: endOf('rework'), passportStatus: lifecycleStatus };
}

/**
 * Scraps a module held by the workshop, with the reason. A module in service, at a dealer,
 * under claim or on its way back cannot be scrapped: the message says where it is.
 */
export async function scrapModule(
	db: Db,
	actor: Actor,
	serial: string,
	input: ScrapInput,
	now = new Date()
) {
	assertCan(actor, 'scrapModule', 'Modules are scrapped by the workshop.');
	const mod = await moduleForMove(db, actor, serial, 'scrap');
	await writeTx(db, (tx) => applyScrap(tx, actor, mod, input.reason, now));
	return { serial: mod.serial, state: endOf('scrap'), passportStatus: 'waste' as const };
}

/**
 * Corrects a wrongly registered build (cell lots, checks, notes) with a reason, while the
 * module is still in the workshop. The record before and after goes to the audit log and
 * the timeline; nothing is deleted from either.
 */
export async function correctBuild(
	db: Db,
	actor: Actor,
	serial: string,
	input: CorrectBuildInput,
	now = new Date()
) {
	assertCan(actor, 'correctBuild', 'Build records are corrected by the workshop.');
	const mod = await moduleForMove(db, actor, serial, 'correctBuild');
	const before = {
		cellLots: mod.cellLots ? (JSON.parse(mod.cellLots) as string[]) : [],
		checks: mod.buildChecks ? Object.keys(JSON.parse(mod.buildChecks)) : [],
		notes: mod.buildNotes ?? ''
	};
	const checks = Object.fromEntries(input.checks.map((k) => [k, true]));
	await writeTx(db, async (tx) => {
		const done = await tx
			.update(modules)
			.set({
				cellLots: JSON.stringify(input.cellLots),
				buildChecks: JSON.stringify(checks),
				buildNotes: input.notes || null,
				updatedAt: now
			})
			.where(and(eq(modules.id, mod.id), eq(modules.state, mod.state)))
			.returning({ id: modules.id });
		if (!done.length) throw new ConflictError(`${mod.serial} changed meanwhile; reload the page.`);
		// The lot index follows the record so traceability finds the right modules.
		await tx.delete(moduleCellLots).where(eq(moduleCellLots.moduleId, mod.id));
		await tx
			.insert(moduleCellLots)
			.values(input.cellLots.map((lotCode) => ({ moduleId: mod.id, lotCode })));
		await recordEvent(tx, actor, {
			moduleId: mod.id,
			kind: 'build_corrected',
			summary: `Build record corrected: ${input.reason}`,
			detail: { reason: input.reason, before, after: { ...input, checks: input.checks } },
			at: now
		});
		await recordAudit(tx, actor, {
			action: 'module.correct_build',
			entity: 'module',
			entityId: mod.serial,
			before,
			after: {
				cellLots: input.cellLots,
				checks: input.checks,
				notes: input.notes,
				reason: input.reason
			},
			at: now
		});
	});
	return { serial: mod.serial, cellLots: input.cellLots };
}

/** Every factory test of a module with its measured values, newest first; the first is current. */
export async function factoryTestsOf(
	db: Db,
	mod: { id: number; testOutcome: 'pass' | 'fail' | null }
) {
	const rows = await db
		.select()
		.from(factoryTests)
		.where(eq(factoryTests.moduleId, mod.id))
		.orderBy(desc(factoryTests.testedAt), desc(factoryTests.id));
	return rows.map((r, i) => ({
		id: r.id,
		testedAt: r.testedAt,
		outcome: r.outcome,
		// After a rework the last result is superseded until the retest arrives.
		current: i === 0 && mod.testOutcome !== null,
		capacityAh: r.capacityAh,
		energyWh: r.energyWh,
		dcirMohm: r.dcirMohm,
		dcirSource: r.dcirSource,
		ocvV: r.ocvV,
		cellSpreadMv: r.cellSpreadMv,
		insulationMohm: r.insulationMohm,
		ambientC: r.ambientC,
		rig: r.rig,
		operator: r.operator,
		failures: JSON.parse(r.failures) as { check: string; message: string }[]
	}));
}
