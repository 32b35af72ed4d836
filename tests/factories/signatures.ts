/**
 * A drawn signature as the checklist's signature pad sends it (JSON of `Signature` in
 * src/lib/schemas/signature.ts): a zig-zag and an underline on a 300 × 120 pad, well inside
 * the schema's limits. Tests sign with it as the technician and as the owner.
 */
export const SIGNATURE = JSON.stringify({
	w: 300,
	h: 120,
	strokes: [
		Array.from({ length: 12 }, (_, i) => [20 + i * 20, 60 + (i % 2 ? 25 : -25)]),
		[
			[40, 100],
			[260, 100]
		]
	]
});
