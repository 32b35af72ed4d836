/** Reading a dealer's inverter log for a claim, with the column mapping remembered per dealer. */
import { eq } from 'drizzle-orm';
import Papa from 'papaparse';
import type { Db } from '$lib/server/db';
import { writeTx } from '$lib/server/db';
import { logMappings } from '$lib/server/db/schema';
import { dealerScopeOf, type Actor } from '$lib/server/actor';
import { InvalidInputError, NotFoundError } from '$lib/server/errors';
import {
	detectColumns,
	InverterLogError,
	summariseLog,
	type LogMapping
} from '$lib/domain/inverter-log';
import { isCalendarDate } from '$lib/domain/calendar';
import { recordAudit } from './audit';
import { findModule, serialFromScan } from './modules';
import { businessDay } from './calendar';

/** The dealer whose remembered log mapping applies when staff file for a module (null: the assembler's own). */
export async function logDealerFor(
	db: Db,
	actor: Actor,
	scanText: string | null | undefined
): Promise<number | null> {
	const scope = dealerScopeOf(actor);
	if (scope !== null || !scanText?.trim()) return scope;
	try {
		return (await findModule(db, actor, await serialFromScan(db, actor, scanText))).dealerOrgId;
	} catch (e) {
		if (e instanceof NotFoundError) return null;
		throw e;
	}
}

/**
 * Reads an inverter log CSV for a claim's evidence. Without a mapping, the dealer's
 * remembered one is used when the file has its columns; otherwise the answer carries the
 * headers and a suggested mapping for the person to confirm. A confirmed mapping is
 * remembered for the dealer. A dealer's people always read with their own organisation's mapping.
 */
export async function readInverterLog(
	db: Db,
	actor: Actor,
	dealerOrgId: number | null,
	csvText: string,
	mapping?: LogMapping,
	now = new Date()
) {
	const org = dealerScopeOf(actor) ?? dealerOrgId;
	const headers = (
		(Papa.parse<string[]>(csvText.replace(/^\uFEFF/, ''), { preview: 1 }).data[0] ?? []) as string[]
	)
		.map((h) => h.trim())
		.filter(Boolean);
	if (!headers.length)
		throw new InvalidInputError('The log has no header row: export it again with column names.');
	const guess = detectColumns(headers);
	const energy = guess.dischargeEnergyKWh ?? guess.dischargeEnergyWh;
	const suggested: Partial<LogMapping> = {
		timestampColumn: guess.timestamp,
		energyColumn: energy,
		energyUnit: guess.dischargeEnergyKWh ? 'kWh' : guess.dischargeEnergyWh ? 'Wh' : undefined,
		energyKind: guess.energyKind ?? 'cumulative',
		tempColumn: guess.cellTempC
	};
	const [stored] =
		org === null ? [] : await db.select().from(logMappings).where(eq(logMappings.dealerOrgId, org));
	const remembered = stored ? (JSON.parse(stored.mapping) as LogMapping) : null;
	const fits = (m: LogMapping) =>
		[m.timestampColumn, m.energyColumn, m.tempColumn].every((c) => !c || headers.includes(c));
	const use = mapping ?? (remembered && fits(remembered) ? remembered : null);
	if (!use)
		return {
			headers,
			suggested,
			remembered,
			mapping: null,
			usedRemembered: false,
			summary: null,
			evidence: null
		};

	let summary;
	try {
		summary = summariseLog(csvText, use);
	} catch (e) {
		if (e instanceof InverterLogError) throw new InvalidInputError(e.message);
		throw e;
	}
	const lastDay = summary.lastAt?.slice(0, 10) ?? '';
	if (isCalendarDate(lastDay) && lastDay > (await businessDay(db, now)))
		summary.problems.push(
			`The last row is dated ${summary.lastAt}, after today: check the inverter's clock.`
		);
	if (mapping && org !== null && JSON.stringify(mapping) !== stored?.mapping) {
		await writeTx(db, async (tx) => {
			const value = JSON.stringify(mapping);
			await tx
				.insert(logMappings)
				.values({ dealerOrgId: org, mapping: value, updatedAt: now })
				.onConflictDoUpdate({
					target: logMappings.dealerOrgId,
					set: { mapping: value, updatedAt: now }
				});
			await recordAudit(tx, actor, {
				action: 'log_mapping.save',
				entity: 'organisation',
				entityId: org,
				before: remembered ?? undefined,
				after: mapping,
				at: now
			});
		});
	}
	return {
		headers,
		suggested,
		remembered,
		mapping: use,
		usedRemembered: !mapping,
		summary,
		evidence: {
			throughputWh: summary.throughputWh,
			avgCellTempC: summary.avgTempC,
			maxCellTempC: summary.maxTempC
		}
	};
}
