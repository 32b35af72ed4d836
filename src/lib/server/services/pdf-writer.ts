/**
 * A small flowing-text writer over pdf-lib for A4 documents in the standard fonts: it wraps
 * text to a width, starts a new page when the next line would cross the bottom margin, and
 * draws headings and label/value rows. Text outside WinAnsi is rewritten first ("Ohm", "<=").
 */
import { PageSizes, PDFDocument, rgb, StandardFonts, type PDFFont, type PDFPage } from 'pdf-lib';

/** Characters the standard PDF fonts (WinAnsi) cannot show, in words they can. */
const WIN_ANSI_SWAPS: [RegExp, string][] = [
	[/Ω/g, 'Ohm'],
	[/≤/g, '<='],
	[/≥/g, '>='],
	[/→/g, '->'],
	[/−/g, '-'],
	[/≈/g, '~'],
	[/[\u00a0\u2009\u202f]/g, ' ']
];

export type Colour = ReturnType<typeof rgb>;

export class PdfWriter {
	readonly W: number;
	readonly H: number;
	readonly LEFT = 50;
	readonly WIDTH: number;
	readonly TOP: number;
	readonly BOTTOM = 70;
	readonly ink = rgb(0.05, 0.17, 0.24);
	readonly soft = rgb(0.21, 0.33, 0.42);
	page: PDFPage;
	/** The baseline the next line goes under, in points from the page's foot. */
	y: number;
	private readonly charset: Set<number>;

	private constructor(
		readonly doc: PDFDocument,
		readonly regular: PDFFont,
		readonly bold: PDFFont
	) {
		[this.W, this.H] = PageSizes.A4;
		this.WIDTH = this.W - 2 * this.LEFT;
		this.TOP = this.H - 50;
		this.charset = new Set(regular.getCharacterSet());
		this.page = doc.addPage(PageSizes.A4);
		this.y = this.TOP;
	}

	/** A new document with its first A4 page and Helvetica (regular and bold) embedded. */
	static async create(): Promise<PdfWriter> {
		const doc = await PDFDocument.create();
		const regular = await doc.embedFont(StandardFonts.Helvetica);
		const bold = await doc.embedFont(StandardFonts.HelveticaBold);
		return new PdfWriter(doc, regular, bold);
	}

	/** The text with what WinAnsi cannot show swapped for words, and anything else left as '?'. */
	clean(s: string): string {
		return [...WIN_ANSI_SWAPS.reduce((t, [re, to]) => t.replace(re, to), s)]
			.map((ch) => (this.charset.has(ch.codePointAt(0)!) ? ch : '?'))
			.join('');
	}

	/** The text in lines no wider than `width`; a word wider than that is cut. */
	wrap(text: string, font: PDFFont, size: number, width: number): string[] {
		const lines: string[] = [];
		for (const para of this.clean(text).split('\n')) {
			let line = '';
			for (const word of para.split(/\s+/).filter(Boolean)) {
				const next = line ? `${line} ${word}` : word;
				if (font.widthOfTextAtSize(next, size) <= width) line = next;
				else {
					if (line) lines.push(line);
					line = word;
					while (font.widthOfTextAtSize(line, size) > width && line.length > 1) {
						let cut = line.length - 1;
						while (cut > 1 && font.widthOfTextAtSize(line.slice(0, cut), size) > width) cut--;
						lines.push(line.slice(0, cut));
						line = line.slice(cut);
					}
				}
			}
			lines.push(line);
		}
		return lines;
	}

	/** Starts a new page unless `h` points still fit above the bottom margin. */
	ensure(h: number) {
		if (this.y - h < this.BOTTOM) {
			this.page = this.doc.addPage(PageSizes.A4);
			this.y = this.TOP;
		}
	}

	/** Writes wrapped text at `x` (from the left margin) and moves down past it. */
	write(
		text: string,
		o: { size?: number; font?: PDFFont; x?: number; width?: number; color?: Colour } = {}
	) {
		const size = o.size ?? 10;
		const font = o.font ?? this.regular;
		const x = this.LEFT + (o.x ?? 0);
		for (const line of this.wrap(text, font, size, o.width ?? this.WIDTH - (o.x ?? 0))) {
			this.ensure(size * 1.4);
			this.page.drawText(line, { x, y: this.y - size, size, font, color: o.color ?? this.ink });
			this.y -= size * 1.4;
		}
	}

	/** A section heading, kept on one page with at least `keep` points of what follows it. */
	heading(text: string, keep = 40) {
		this.y -= 10;
		this.ensure(30 + keep);
		this.write(text, { size: 13, font: this.bold });
		this.page.drawLine({
			start: { x: this.LEFT, y: this.y + 2 },
			end: { x: this.LEFT + this.WIDTH, y: this.y + 2 },
			thickness: 0.75,
			color: this.soft
		});
		this.y -= 6;
	}

	/** A label and its value side by side; the value wraps in its own column. */
	field(label: string, value: string) {
		this.ensure(14);
		const top = this.y;
		this.write(label, { font: this.bold, width: 140 });
		const afterLabel = this.y;
		this.y = top;
		this.write(value, { x: 150 });
		this.y = Math.min(this.y, afterLabel);
	}

	/**
	 * Images three to a row, each scaled into a 150 × 112 pt box with its caption's first line
	 * under it; a JPEG or PNG is drawn, anything else (or a damaged file) as a framed `missing` note.
	 */
	async thumbnails(
		photos: { bytes: Uint8Array; contentType: string; caption: string | null }[],
		missing: string
	) {
		const TW = 150;
		const TH = 112;
		let col = 0;
		for (const p of photos) {
			let img;
			try {
				img =
					p.contentType === 'image/jpeg'
						? await this.doc.embedJpg(p.bytes)
						: p.contentType === 'image/png'
							? await this.doc.embedPng(p.bytes)
							: null;
			} catch {
				img = null;
			}
			if (col === 0) this.ensure(TH + 22);
			const x = this.LEFT + col * (TW + 15);
			if (img) {
				const k = Math.min(TW / img.width, TH / img.height);
				this.page.drawImage(img, {
					x,
					y: this.y - TH,
					width: img.width * k,
					height: img.height * k
				});
			} else {
				this.page.drawRectangle({
					x,
					y: this.y - TH,
					width: TW,
					height: TH,
					borderColor: this.soft,
					borderWidth: 0.5
				});
				this.page.drawText(this.clean(missing), {
					x: x + 6,
					y: this.y - TH / 2,
					size: 8,
					font: this.regular,
					color: this.ink
				});
			}
			if (p.caption)
				this.page.drawText(this.clean(this.wrap(p.caption, this.regular, 8, TW)[0] ?? ''), {
					x,
					y: this.y - TH - 10,
					size: 8,
					font: this.regular,
					color: this.ink
				});
			col++;
			if (col === 3) {
				col = 0;
				this.y -= TH + 18;
			}
		}
		if (col) this.y -= TH + 18;
	}
}
