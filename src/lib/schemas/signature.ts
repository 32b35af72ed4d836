/**
 * A signature drawn on the phone (signature_pad), sent as JSON text in a hidden form field:
 * `{ "w": 600, "h": 200, "strokes": [[[x, y], …], …] }` in canvas pixels. Stored as is and
 * drawn as vector lines on the certificate. Bounded before it is parsed: at most 60 000
 * characters, 100 strokes and 4 000 points.
 */
import { z } from 'zod';

export const SIGNATURE_MAX_CHARS = 60_000;
const MAX_POINTS = 4000;

export interface Signature {
	w: number;
	h: number;
	strokes: [number, number][][];
}

const shape = z.object({
	w: z.number().int().min(50).max(4000),
	h: z.number().int().min(20).max(4000),
	strokes: z
		.array(
			z
				.array(z.tuple([z.number().finite(), z.number().finite()]))
				.min(1)
				.max(MAX_POINTS)
		)
		.min(1)
		.max(100)
});

/** Null when left blank; otherwise a signature with enough ink to be one. */
export function signatureField(who: string) {
	return z.preprocess(
		(v) => (v === undefined || v === null || v === '' ? null : v),
		z
			.string({ error: `${who}: sign in the box.` })
			.max(SIGNATURE_MAX_CHARS, {
				error: `${who}: the signature is too detailed to store; clear it and sign again.`
			})
			.transform((text, ctx): Signature => {
				let raw: unknown;
				try {
					raw = JSON.parse(text);
				} catch {
					ctx.addIssue({
						code: 'custom',
						message: `${who}: the signature could not be read; clear it and sign again.`
					});
					return z.NEVER;
				}
				const parsed = shape.safeParse(raw);
				const points = parsed.success ? parsed.data.strokes.reduce((n, s) => n + s.length, 0) : 0;
				if (!parsed.success || points > MAX_POINTS) {
					ctx.addIssue({
						code: 'custom',
						message: `${who}: the signature could not be read; clear it and sign again.`
					});
					return z.NEVER;
				}
				const { w, h } = parsed.data;
				const inside = parsed.data.strokes.every((s) =>
					s.every(([x, y]) => x >= -1 && y >= -1 && x <= w + 1 && y <= h + 1)
				);
				if (!inside || points < 8) {
					ctx.addIssue({
						code: 'custom',
						message: `${who}: that is too little to be a signature; sign with your name in the box.`
					});
					return z.NEVER;
				}
				const r = (x: number) => Math.round(x * 10) / 10;
				return {
					w,
					h,
					strokes: parsed.data.strokes.map((s) =>
						s.map(([x, y]) => [r(x), r(y)] as [number, number])
					)
				};
			})
			.nullable()
	);
}

/** An SVG path ("M x y L …") of a signature, scaled by `scale`, for the page and the PDF. */
export function signaturePath(sig: Signature, scale = 1, flipY = false): string {
	return sig.strokes
		.map((stroke) => {
			const pts = stroke.length === 1 ? [stroke[0], [stroke[0][0] + 0.5, stroke[0][1]]] : stroke;
			return pts
				.map(
					([x, y], i) =>
						`${i ? 'L' : 'M'}${(x * scale).toFixed(1)} ${((flipY ? sig.h - y : y) * scale).toFixed(1)}`
				)
				.join(' ');
		})
		.join(' ');
}
