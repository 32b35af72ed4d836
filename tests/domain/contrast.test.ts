/**
 * Non-text contrast of input borders (WCAG 2.2 SC 1.4.11: at least 3:1 against adjacent
 * colours), computed with WCAG 2.2's relative luminance and contrast ratio from the token
 * colours in src/app.css.
 */
import { readFileSync } from 'node:fs';
import { describe, expect, it } from 'vitest';
import Color from 'colorjs.io';

/** The same ratio from an independent library (colorjs.io's WCAG 2.1 contrast, identical in 2.2). */
const libraryRatio = (a: string, b: string) => Color.contrast(a, b, 'WCAG21');

/** WCAG 2.2 relative luminance of an sRGB colour "#rrggbb" (definition in the WCAG 2.2 glossary). */
function luminance(hex: string): number {
	const [r, g, b] = [1, 3, 5].map((i) => {
		const c = parseInt(hex.slice(i, i + 2), 16) / 255;
		return c <= 0.04045 ? c / 12.92 : ((c + 0.055) / 1.055) ** 2.4;
	});
	return 0.2126 * r + 0.7152 * g + 0.0722 * b;
}
const ratio = (a: string, b: string) => {
	const [hi, lo] = [luminance(a), luminance(b)].sort((x, y) => y - x);
	return (hi + 0.05) / (lo + 0.05);
};

const css = readFileSync('src/app.css', 'utf8');
const token = (name: string) => {
	const at = css.indexOf(`--color-${name}:`);
	expect(at, `token --color-${name} in src/app.css`).toBeGreaterThan(-1);
	return css.slice(at, css.indexOf(';', at)).split(':')[1].trim();
};

describe('contrast ratio formula (WCAG 2.2)', () => {
	it('black on white is 21:1 and a colour on itself 1:1 (by definition)', () => {
		expect(ratio('#000000', '#ffffff')).toBeCloseTo(21, 6);
		expect(ratio('#36536a', '#36536a')).toBe(1);
	});

	it('#767676 on white is about 4.54:1 (the usual lightest AA grey, from memory)', () => {
		expect(ratio('#767676', '#ffffff')).toBeCloseTo(4.54, 2);
	});

	// colorjs.io derives the luminance weights from the sRGB primaries at full precision; WCAG
	// rounds them to 0.2126 / 0.7152 / 0.0722, so the two agree to about 1e-4.
	it('agrees with colorjs.io on every token pair the inputs use', () => {
		for (const [a, b] of [
			['edge', 'card'],
			['edge', 'paper'],
			['line', 'card']
		])
			expect(ratio(token(a), token(b)), `${a} on ${b}`).toBeCloseTo(
				libraryRatio(token(a), token(b)),
				3
			);
	});
});

describe('input borders meet 3:1 (WCAG 2.2 SC 1.4.11)', () => {
	it('the input utility draws its border in the edge token', () => {
		const at = css.indexOf('@utility input');
		const block = css.slice(at, css.indexOf('}', at));
		expect(block).toContain('border-edge');
		expect(block).not.toContain('border-line');
	});

	it('the edge colour is at least 3:1 against the card and the paper it sits on', () => {
		expect(ratio(token('edge'), token('card'))).toBeGreaterThanOrEqual(3);
		expect(ratio(token('edge'), token('paper'))).toBeGreaterThanOrEqual(3);
		expect(libraryRatio(token('edge'), token('card'))).toBeGreaterThanOrEqual(3);
	});

	it('the old line colour (kept for dividers) would not have been enough: about 1.4:1', () => {
		expect(ratio(token('line'), token('card'))).toBeLessThan(1.5);
	});
});
