import { z } from 'zod';

import { BUILD_CHECKS } from '$lib/build-checks';

export { BUILD_CHECKS, type BuildCheckKey } from '$lib/build-checks';

const LOT = /^[A-Za-z0-9][A-Za-z0-9._/-]{1,39}$/;
const asList = (v: unknown) =>
	typeof v === 'string' ? v.split(/[\s,;]+/) : Array.isArray(v) ? v : v == null ? [] : [v];

/** The build form and `POST /api/modules/{serial}/build` share this schema. */
export const buildSchema = z.object({
	cellLots: z.preprocess(
		(v) => [
			...new Set(
				asList(v)
					.map((s) => String(s).trim())
					.filter(Boolean)
			)
		],
		z
			.array(
				z.string().regex(LOT, 'A cell lot code is 2–40 letters, digits or . _ / - (no spaces).')
			)
			.min(1, 'Scan or type at least one cell lot code.')
			.max(64, 'At most 64 cell lots per module.')
	),
	checks: z.preprocess(
		(v) => asList(v).map(String),
		z.array(z.string()).refine((list) => BUILD_CHECKS.every((c) => list.includes(c.key)), {
			message: 'Confirm every assembly check before registering the build.'
		})
	),
	notes: z.string().trim().max(500, 'Keep notes under 500 characters.').optional().default('')
});
export type BuildInput = z.infer<typeof buildSchema>;
