/** Our words and colours for a site's progress, from its systems. */
export const SITE_STATUS: Record<string, { label: string; tone: string }> = {
	no_systems: { label: 'No system yet', tone: 'bg-paper text-ink-soft border border-line' },
	planned: { label: 'Being installed', tone: 'bg-wait-soft text-wait' },
	commissioned: { label: 'In service', tone: 'bg-ok-soft text-ok' }
};

export const SYSTEM_STATUS: Record<string, { label: string; tone: string }> = {
	planned: { label: 'Being installed', tone: 'bg-wait-soft text-wait' },
	commissioned: { label: 'Commissioned', tone: 'bg-ok-soft text-ok' }
};
