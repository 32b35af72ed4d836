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
	returned: 'On its way back',
	received_back: 'Received back',
	inspected: 'Inspected after return',
	kept_for_analysis: 'Kept for analysis',
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
	received_back: 'bg-bad-soft text-bad',
	inspected: 'bg-wait-soft text-wait',
	kept_for_analysis: 'bg-paper text-ink-soft border border-line',
	replaced: 'bg-paper text-ink-soft border border-line',
	scrapped: 'bg-paper text-ink-soft border border-line'
};
