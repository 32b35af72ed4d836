import type { DesignCheckResult } from '$lib/domain/design-check';

type Issue = { path: string; message: string };

/**
 * Runs `POST /api/design-check` as the technician types: debounced, and a newer request
 * cancels an older one, so the figures shown always belong to the latest input.
 */
export class LiveDesignCheck {
	result = $state<DesignCheckResult | null>(null);
	issues = $state<Issue[]>([]);
	message = $state('');
	pending = $state(false);
	#timer: ReturnType<typeof setTimeout> | null = null;
	#controller: AbortController | null = null;

	readonly delayMs: number;

	constructor(delayMs = 350) {
		this.delayMs = delayMs;
	}

	/** Schedules a check of `body`; null (input not complete yet) clears the result. */
	request(body: object | null) {
		if (this.#timer) clearTimeout(this.#timer);
		if (!body) {
			this.#controller?.abort();
			this.result = null;
			this.issues = [];
			this.message = '';
			return;
		}
		this.#timer = setTimeout(() => this.#send(body), this.delayMs);
	}

	async #send(body: object) {
		this.#controller?.abort();
		const controller = (this.#controller = new AbortController());
		this.pending = true;
		try {
			const res = await fetch('/api/design-check', {
				method: 'POST',
				headers: { 'content-type': 'application/json' },
				body: JSON.stringify(body),
				signal: controller.signal
			});
			const data = await res.json();
			if (controller.signal.aborted) return;
			if (res.ok) {
				this.result = data as DesignCheckResult;
				this.issues = [];
				this.message = '';
			} else {
				this.result = null;
				this.issues = data.issues ?? [];
				this.message = data.issues?.length
					? ''
					: (data.message ?? 'The design could not be checked.');
			}
		} catch (e) {
			if (controller.signal.aborted) return;
			this.result = null;
			this.message =
				'The design check could not be reached (no signal?). It runs again when you save.';
			console.warn(e);
		} finally {
			if (this.#controller === controller) this.pending = false;
		}
	}

	destroy() {
		if (this.#timer) clearTimeout(this.#timer);
		this.#controller?.abort();
	}
}
