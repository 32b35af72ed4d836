/**
 * A module's status in the sense of Regulation (EU) 2023/1542, Annex XIII §4(c): original,
 * repurposed, re-used, remanufactured or waste. Every screen, export and passport reads it
 * from this one function, so the lifecycle work that records repurposing, re-use and
 * remanufacturing only has to change what this returns.
 */
export const PASSPORT_STATUSES = [
	'original',
	'repurposed',
	'reused',
	'remanufactured',
	'waste'
] as const;
export type PassportStatus = (typeof PASSPORT_STATUSES)[number];

/** The words the Battery Pass data model v1.2.0 uses for each status (its BatteryStatusEnumeration). */
export const BATTERY_PASS_STATUS: Record<PassportStatus, string> = {
	original: 'Original',
	repurposed: 'Repurposed',
	reused: 'Reused',
	remanufactured: 'Remanufactured',
	waste: 'Waste'
};

export const PASSPORT_STATUS_LABELS: Record<PassportStatus, string> = {
	original: 'Original',
	repurposed: 'Repurposed',
	reused: 'Re-used',
	remanufactured: 'Remanufactured',
	waste: 'Waste'
};

/**
 * The status of a module from what the register knows. Today the register records no
 * second life, so a module is original until it is scrapped (waste). `lifecycleStatus`
 * lets a recorded status (repurposed, re-used, remanufactured) take precedence once the
 * lifecycle stores one.
 */
export function passportStatusOf(module: {
	state: string;
	lifecycleStatus?: PassportStatus | null;
}): PassportStatus {
	if (module.lifecycleStatus) return module.lifecycleStatus;
	return module.state === 'scrapped' ? 'waste' : 'original';
}
