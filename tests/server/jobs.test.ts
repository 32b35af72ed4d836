/**
 * Scheduled campaign reminders run in one process only when two app servers share a database
 * (issue 13, loose end): each round takes a lease row that lasts one interval, with one
 * conditional upsert, so of two connections trying at the same moment exactly one wins, and
 * after the lease expires another may take over. Reminders of a round are sent once.
 */
import { beforeAll, describe, expect, it } from 'vitest';
import { count, eq } from 'drizzle-orm';
import { mkdtempSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { migrateDb, openDb, type Db } from '$lib/server/db/client';
import { campaignSteps } from '$lib/server/db/schema';
import { seedDemo } from '$lib/server/seed/demo';
import { seedDemoFleet } from '$lib/server/seed/demo-fleet';
import { openCampaign } from '$lib/server/services/campaign-opening';
import { leaseOf, REMINDER_JOB, runReminderRound, takeLease } from '$lib/server/services/jobs';
import { reminderIntervalMs } from '$lib/server/scheduler';
import { actorFor } from '../factories/db';

const HOUR = 3_600_000;
const DAY = 24 * HOUR;
const T0 = new Date('2026-11-25T10:00:00Z');
let a: Db, b: Db;

beforeAll(async () => {
	// Two connections to one file, as two app servers on one database.
	const url = `file:${join(mkdtempSync(join(tmpdir(), 'packledger-jobs-')), 'j.db')}`;
	a = await openDb(url);
	await migrateDb(a);
	b = await openDb(url);
	await seedDemo(a, 'test-password-123');
	await seedDemoFleet(a);
}, 120_000);

describe('job leases', () => {
	it('gives a lease to exactly one of two servers trying at once, and to the other once it expires', async () => {
		const now = new Date('2026-01-01T00:00:00Z');
		const got = await Promise.all([
			takeLease(a, 'test-job', 'server-a', HOUR, now),
			takeLease(b, 'test-job', 'server-b', HOUR, now)
		]);
		expect(got.filter(Boolean)).toHaveLength(1);
		const winner = got[0] ? 'server-a' : 'server-b';
		expect((await leaseOf(a, 'test-job'))?.holder).toBe(winner);
		// Within the hour nobody, not even the holder, runs the job again.
		const later = new Date(now.getTime() + HOUR - 1);
		expect(await takeLease(a, 'test-job', 'server-a', HOUR, later)).toBe(false);
		expect(await takeLease(b, 'test-job', 'server-b', HOUR, later)).toBe(false);
		// At the expiry the other server may take it.
		const loser = winner === 'server-a' ? 'server-b' : 'server-a';
		const expiry = new Date(now.getTime() + HOUR);
		expect(await takeLease(loser === 'server-a' ? a : b, 'test-job', loser, HOUR, expiry)).toBe(
			true
		);
		expect((await leaseOf(b, 'test-job'))?.holder).toBe(loser);
	});

	it('sends a round of campaign reminders once when both servers run it at the same moment', async () => {
		const officer = await actorFor(a, 'warranty@tidewater.example');
		await openCampaign(
			a,
			officer,
			{
				title: 'Terminal cover check',
				notice: 'Check that each terminal cover is seated; some were fitted loose.',
				remedy: 'Seat the cover and confirm in Packledger.',
				reminderDays: 7,
				select: { model: 'TC-HC-48' }
			},
			T0
		);
		const reminders = async () =>
			(
				await a.select({ n: count() }).from(campaignSteps).where(eq(campaignSteps.action, 'remind'))
			)[0].n;
		expect(await reminders()).toBe(0);
		const at = new Date(T0.getTime() + 7 * DAY);
		const [ra, rb] = await Promise.all([
			runReminderRound(a, 'server-a', HOUR, at),
			runReminderRound(b, 'server-b', HOUR, at)
		]);
		expect([ra, rb].filter((r) => r === null)).toHaveLength(1);
		const sent = (ra ?? rb)!;
		expect(sent.modules).toBeGreaterThan(0);
		expect(await reminders()).toBe(sent.modules);
		expect((await leaseOf(a, REMINDER_JOB))?.expiresAt).toEqual(new Date(at.getTime() + HOUR));
	});
});

describe('the reminder interval setting', () => {
	it('defaults to an hour, takes minutes, 0 for off, and refuses nonsense with the setting named', () => {
		expect(reminderIntervalMs(undefined)).toBe(HOUR);
		expect(reminderIntervalMs('')).toBe(HOUR);
		expect(reminderIntervalMs('15')).toBe(15 * 60_000);
		expect(reminderIntervalMs('0')).toBe(0);
		expect(() => reminderIntervalMs('-1')).toThrow(/CAMPAIGN_REMINDER_INTERVAL_MINUTES/);
		expect(() => reminderIntervalMs('soon')).toThrow(/from 0 \(off\) to 10080/);
		expect(() => reminderIntervalMs('10081')).toThrow(/a week/);
	});
});
