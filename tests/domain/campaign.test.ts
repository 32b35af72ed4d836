/**
 * Service campaign rules: each module's steps (notified → acknowledged → resolved with an
 * outcome, or unreachable), completion as remedied ÷ affected (the completion rate recall
 * follow-ups report — common practice), and reminders after a set number of days.
 */
import { describe, expect, it } from 'vitest';
import {
	campaignCounts,
	campaignStep,
	CampaignStepError,
	nextCampaignReference,
	reminderDue
} from '../../src/lib/domain/campaign';

describe('campaign steps', () => {
	it('follows notified → acknowledged → resolved, and may resolve at once', () => {
		expect(campaignStep('S1', 'notified', 'acknowledge')).toBe('acknowledged');
		expect(campaignStep('S1', 'acknowledged', 'resolve', 'reworked')).toBe('resolved');
		expect(campaignStep('S1', 'notified', 'resolve', 'inspected_ok')).toBe('resolved');
		expect(campaignStep('S1', 'acknowledged', 'unreachable')).toBe('unreachable');
		expect(campaignStep('S1', 'unreachable', 'resolve', 'not_found')).toBe('resolved');
	});
	it('refuses acknowledging twice, saying so', () => {
		expect(() => campaignStep('S1', 'acknowledged', 'acknowledge')).toThrow(
			'S1 is already acknowledged.'
		);
		try {
			campaignStep('S1', 'acknowledged', 'acknowledge');
		} catch (e) {
			expect(e).toBeInstanceOf(CampaignStepError);
			expect((e as CampaignStepError).status).toBe(409);
		}
	});
	it('needs an outcome to resolve and takes one only then', () => {
		expect(() => campaignStep('S1', 'notified', 'resolve')).toThrow(/Say how S1 was resolved/);
		expect(() => campaignStep('S1', 'notified', 'acknowledge', 'reworked')).toThrow(
			/Only resolving/
		);
	});
	it('refuses any step on a resolved module', () => {
		for (const a of ['acknowledge', 'unreachable'] as const)
			expect(() => campaignStep('S1', 'resolved', a)).toThrow(CampaignStepError);
		expect(() => campaignStep('S1', 'resolved', 'resolve', 'reworked')).toThrow(CampaignStepError);
	});
});

describe('completion', () => {
	it('is resolved over affected, one decimal, unreachable not complete', () => {
		// 2 of 3 resolved = 66.666… % → 66.7 %; 1 of 8 = 12.5 %
		expect(campaignCounts(['resolved', 'resolved', 'notified']).completionPct).toBe(66.7);
		expect(campaignCounts(['resolved', ...Array(7).fill('unreachable')]).completionPct).toBe(12.5);
		expect(campaignCounts(['resolved', 'resolved']).completionPct).toBe(100);
		expect(campaignCounts([]).completionPct).toBe(0);
		expect(campaignCounts(['notified', 'acknowledged', 'unreachable', 'resolved'])).toEqual({
			total: 4,
			notified: 1,
			acknowledged: 1,
			resolved: 1,
			unreachable: 1,
			completionPct: 25
		});
	});
});

describe('reminders', () => {
	const day = 86_400_000;
	const t0 = new Date('2026-11-01T00:00:00Z');
	it('are due exactly after the set days since the last step or reminder', () => {
		const item = { state: 'notified' as const, lastStepAt: t0, lastReminderAt: null };
		expect(reminderDue(item, 14, new Date(t0.getTime() + 14 * day - 1))).toBe(false);
		expect(reminderDue(item, 14, new Date(t0.getTime() + 14 * day))).toBe(true);
		const reminded = { ...item, lastReminderAt: new Date(t0.getTime() + 14 * day) };
		expect(reminderDue(reminded, 14, new Date(t0.getTime() + 20 * day))).toBe(false);
		expect(reminderDue(reminded, 14, new Date(t0.getTime() + 28 * day))).toBe(true);
	});
	it('never go for resolved or unreachable modules', () => {
		for (const state of ['resolved', 'unreachable'] as const)
			expect(
				reminderDue({ state, lastStepAt: t0, lastReminderAt: null }, 1, new Date('2027-01-01'))
			).toBe(false);
	});
});

describe('references', () => {
	it('count up within a year and start again the next', () => {
		expect(nextCampaignReference(2026, null)).toBe('SC-2026-001');
		expect(nextCampaignReference(2026, 'SC-2026-009')).toBe('SC-2026-010');
		expect(nextCampaignReference(2027, 'SC-2026-010')).toBe('SC-2027-001');
	});
});
