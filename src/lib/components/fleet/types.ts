import type { ModuleState } from '$lib/server/db/schema';

/** One module as `/api/modules` sends it (dates as ISO 8601 text). */
export interface FleetRow {
	serial: string;
	state: ModuleState;
	model: string;
	dealer: string | null;
	builtAt: string | null;
	testedAt: string | null;
	testOutcome: 'pass' | 'fail' | null;
	shippedAt: string | null;
	cellLots: string[];
	site: string | null;
}

export interface FleetPage {
	items: FleetRow[];
	total: number;
	page: number;
	pageSize: number;
}

/** The filter fields of a view, as text from the URL. */
export interface FleetFilterValues {
	q?: string;
	state?: string;
	model?: string;
	dealer?: string;
	builtFrom?: string;
	builtTo?: string;
	lot?: string;
	importId?: string;
}
