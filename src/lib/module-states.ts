/** Display names and colours of module states: our own words for each step of a module's life. */
export const STATE_LABELS: Record<string, string> = {
	allocated: 'Label printed',
	built: 'Built, awaiting test',
	test_failed: 'Failed factory test',
	in_stock: 'In stock',
	shipped: 'At dealer',
	installed: 'Installed',
	commissioned: 'In service',
	claim_open: 'Under claim',
	returned: 'Returned',
	replaced: 'Replaced',
	scrapped: 'Scrapped'
};

export const STATE_TONES: Record<string, string> = {
	allocated: 'bg-paper text-ink-soft border border-line',
	built: 'bg-wait-soft text-wait',
	test_failed: 'bg-bad-soft text-bad',
	in_stock: 'bg-glass-soft text-glass-dark',
	shipped: 'bg-glass-soft text-glass-dark',
	installed: 'bg-glass-soft text-glass-dark',
	commissioned: 'bg-ok-soft text-ok',
	claim_open: 'bg-wait-soft text-wait',
	returned: 'bg-bad-soft text-bad',
	replaced: 'bg-paper text-ink-soft border border-line',
	scrapped: 'bg-paper text-ink-soft border border-line'
};
