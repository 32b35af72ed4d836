/**
 * A module model as the domain sees it: rated data, factory test limits and
 * warranty terms. Pure data, no database types, so every formula can be tested alone.
 */
export interface ModelSpec {
	code: string;
	name: string;
	/** Voltage variant label such as "12", "24", "48"; appears in serials. */
	variant: string;
	cellsSeries: number;
	cellMinV: number;
	cellNominalV: number;
	cellMaxV: number;
	ratedAh: number;
	usableWh: number;
	/** Maximum continuous C-rate (multiples of I_t = C_n / 1 h, IEC 61434). */
	maxContinuousC: number;
	burstC: number;
	burstSeconds: number;
	chargeTempMinC: number;
	chargeTempMaxC: number;
	dischargeTempMinC: number;
	dischargeTempMaxC: number;
	massKg: number;
	/** GTIN-14 or null. */
	gtin: string | null;
}

export interface TestLimits {
	minCapacityAh: number;
	maxDcirMohm: number;
	maxCellSpreadMv: number;
	minInsulationMohm: number;
}

export interface WarrantyTerms {
	years: number;
	ratedCycles: number;
	endRetentionPct: number;
	referenceTempC: number;
	hotTempC: number;
	hotRatedCycles: number;
}

/** A model's current warranty terms: the one lookup commissioning (snapshot) and claims (fallback) use. */
export function warrantyTermsOf(
	model: { warrantyYears: number } & Omit<WarrantyTerms, 'years'>
): WarrantyTerms {
	return {
		years: model.warrantyYears,
		ratedCycles: model.ratedCycles,
		endRetentionPct: model.endRetentionPct,
		referenceTempC: model.referenceTempC,
		hotTempC: model.hotTempC,
		hotRatedCycles: model.hotRatedCycles
	};
}

export interface DerivedFigures {
	nominalV: number;
	minV: number;
	maxV: number;
	/** Nominal energy from V_nominal × Ah (Wh). */
	nominalWh: number;
	/** Wh per Ah of capacity at nominal voltage (equals nominal voltage numerically). */
	whPerAh: number;
	maxContinuousA: number;
	burstA: number;
	/** Ideal minutes for a full charge at the continuous C-rate: 60 / C (common practice). */
	minutesAtContinuousC: number;
}

const round = (x: number, digits = 3) => {
	const f = 10 ** digits;
	return Math.round(x * f) / f;
};

/** Current in amperes for a C-rate: I = n × C_n (IEC 61434 reference current I_t = C_n / 1 h). */
export function currentForCRate(cRate: number, ratedAh: number): number {
	return cRate * ratedAh;
}

/** Derived figures of a model, computed once here instead of typed in twice. */
export function deriveFigures(
	m: Pick<
		ModelSpec,
		| 'cellsSeries'
		| 'cellMinV'
		| 'cellNominalV'
		| 'cellMaxV'
		| 'ratedAh'
		| 'maxContinuousC'
		| 'burstC'
	>
): DerivedFigures {
	const nominalV = m.cellsSeries * m.cellNominalV;
	return {
		nominalV: round(nominalV),
		minV: round(m.cellsSeries * m.cellMinV),
		maxV: round(m.cellsSeries * m.cellMaxV),
		nominalWh: round(nominalV * m.ratedAh, 1),
		whPerAh: round(nominalV),
		maxContinuousA: round(currentForCRate(m.maxContinuousC, m.ratedAh), 1),
		burstA: round(currentForCRate(m.burstC, m.ratedAh), 1),
		minutesAtContinuousC: m.maxContinuousC > 0 ? round(60 / m.maxContinuousC, 1) : Infinity
	};
}
