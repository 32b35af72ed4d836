/**
 * The app server's scheduled work, started once from `init` in hooks.server.ts: campaign
 * reminders every CAMPAIGN_REMINDER_INTERVAL_MINUTES (default 60; 0 switches them off). Each
 * server checks every few minutes and runs a round only when it takes the round's lease in the
 * database, so two servers on one database send each reminder once.
 */
import { hostname } from 'node:os';
import { randomUUID } from 'node:crypto';
import type { Db } from '$lib/server/db';
import { runReminderRound } from '$lib/server/services/jobs';

const MINUTE = 60_000;

/** The reminder interval in milliseconds from the environment; 0 when switched off. */
export function reminderIntervalMs(value = process.env.CAMPAIGN_REMINDER_INTERVAL_MINUTES): number {
	if (value === undefined || value.trim() === '') return 60 * MINUTE;
	const minutes = Number(value);
	if (!Number.isFinite(minutes) || minutes < 0 || minutes > 7 * 24 * 60)
		throw new Error(
			`CAMPAIGN_REMINDER_INTERVAL_MINUTES must be a number of minutes from 0 (off) to 10080 (a week); it is "${value.slice(0, 40)}".`
		);
	return Math.round(minutes * MINUTE);
}

let started: ReturnType<typeof setInterval> | null = null;

/** Starts the reminder rounds (once per process); returns a function that stops them. */
export function startScheduler(db: Db, intervalMs = reminderIntervalMs()): () => void {
	if (started || intervalMs === 0) return () => {};
	const holder = `${hostname()}:${process.pid}:${randomUUID().slice(0, 8)}`;
	const tick = async () => {
		try {
			const sent = await runReminderRound(db, holder, intervalMs);
			if (sent?.modules)
				console.info(
					`Campaign reminders: ${sent.modules} modules, ${sent.dealers} dealers reminded.`
				);
		} catch (e) {
			// A failed round is retried at the next tick, once the lease has expired.
			console.error('Campaign reminders failed:', e);
		}
	};
	// Check at least every 5 minutes, so a round is late by at most that after the lease expires.
	started = setInterval(tick, Math.min(intervalMs, 5 * MINUTE));
	started.unref();
	void tick();
	return () => {
		if (started) clearInterval(started);
		started = null;
	};
}
