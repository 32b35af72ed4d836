import type { PageLoad } from './$types';

/**
 * The full record's component is imported only when the server load gave a full record
 * (staff, the module's dealer): anyone scanning a label downloads the public record's code
 * alone. The guard is the server load's; this load reads nothing else.
 */
export const load: PageLoad = async ({ data }) => {
	const FullRecord = data.full
		? (await import('$lib/components/modules/full-record.svelte')).default
		: null;
	return { ...data, FullRecord };
};
