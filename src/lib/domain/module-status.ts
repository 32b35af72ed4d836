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
 * The status of a module from what the register knows. A scrapped module is waste, whatever
 * it was before (Regulation (EU) 2023/1542, Art. 3 definitions, from memory: a battery its holder discards is
 * waste). Otherwise a recorded status (remanufactured after the rework of a module that had
 * been in service, repurposed, re-used) takes precedence; a module is original until then.
 */
export function passportStatusOf(module: {
	state: string;
	lifecycleStatus?: PassportStatus | null;
}): PassportStatus {
	if (module.state === 'scrapped') return 'waste';
	return module.lifecycleStatus ?? 'original';
}

/**
 * The status a rework leaves: a module that was placed in service and comes back through
 * rework is remanufactured (the same Art. 3, from memory: an operation restoring a used battery); a module reworked before
 * it ever left the factory is still original.
 */
export function statusAfterRework(wasInService: boolean, current: PassportStatus | null) {
	return wasInService ? 'remanufactured' : (current ?? 'original');
}
