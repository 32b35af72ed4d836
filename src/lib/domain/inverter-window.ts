/**
 * The inverter's DC window as the design check takes it, on its own so that a page which only
 * shows a system's window (the system page) does not carry the whole design check. Pure.
 */

export interface InverterWindow {
	/** DC window the inverter operates in. */
	minV: number;
	maxV: number;
	/** Narrower range the maker recommends (full power, best efficiency); optional. */
	preferredMinV?: number;
	preferredMaxV?: number;
	maxChargeA?: number;
	maxDischargeA?: number;
}

/** The inverter's window as the design check takes it, from a system form or a stored system (nulls = not given). */
export function toInverterWindow(s: {
	inverterMinV: number;
	inverterMaxV: number;
	preferredMinV?: number | null;
	preferredMaxV?: number | null;
	maxChargeA?: number | null;
	maxDischargeA?: number | null;
}): InverterWindow {
	return {
		minV: s.inverterMinV,
		maxV: s.inverterMaxV,
		preferredMinV: s.preferredMinV ?? undefined,
		preferredMaxV: s.preferredMaxV ?? undefined,
		maxChargeA: s.maxChargeA ?? undefined,
		maxDischargeA: s.maxDischargeA ?? undefined
	};
}
