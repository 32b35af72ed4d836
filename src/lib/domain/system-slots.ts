/** Slots of a system: `parallel` strings of `series` modules each, numbered from 1. Pure. */

export interface SlotRef {
	stringNo: number;
	position: number;
}

/** The first empty slot, filling string 1 from position 1, then string 2, and so on; null when full. */
export function nextEmptySlot(series: number, parallel: number, taken: SlotRef[]): SlotRef | null {
	const used = new Set(taken.map((t) => `${t.stringNo}/${t.position}`));
	for (let stringNo = 1; stringNo <= parallel; stringNo++)
		for (let position = 1; position <= series; position++)
			if (!used.has(`${stringNo}/${position}`)) return { stringNo, position };
	return null;
}
