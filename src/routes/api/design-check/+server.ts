import { json } from '@sveltejs/kit';
import { requireCan } from '$lib/server/auth/guards';
import { getDb } from '$lib/server/db';
import { designCheckRequestSchema } from '$lib/schemas/site';
import { parseJson } from '$lib/server/validation';
import { designCheck } from '$lib/server/services/systems';
import { jsonFrom } from '$lib/server/http';
import type { RequestHandler } from './$types';

/**
 * Checks a design: body `{ module: {…figures, internalResistanceMOhm?} | model: "TC-HC-48",
 * series, parallel, inverter: { minV, maxV, preferredMinV?, preferredMaxV?, maxChargeA?,
 * maxDischargeA? }, targetEnergyKWh?, protection?: { ratedCurrentA, ratedVoltageDcV,
 * breakingCapacityKA } }`; answers string voltage, energy, currents, power, fit, problems,
 * `shortCircuitCurrentA`, `protection: { fits, problems[] }` and (with `model`) suggestions,
 * each with the reason for its rank. Nothing is stored.
 */
export const POST: RequestHandler = async (event) => {
	requireCan(event, 'checkDesign');
	const parsed = await parseJson(designCheckRequestSchema, event.request);
	if (!parsed.ok)
		return json(
			{
				message: `The design cannot be checked: ${parsed.issues.map((i) => (i.path ? `${i.path}: ${i.message}` : i.message)).join('; ')}`,
				issues: parsed.issues
			},
			{ status: 400 }
		);
	try {
		return json(await designCheck(await getDb(), parsed.data));
	} catch (e) {
		return jsonFrom(e);
	}
};
