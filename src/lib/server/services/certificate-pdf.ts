import { PageSizes, PDFDocument, rgb, StandardFonts, type PDFFont, type PDFPage } from 'pdf-lib';
import type { CommissioningItem } from '$lib/domain/commissioning';
import type { CertificateData } from './commissioning';

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

const STATUS_WORDS: Record<CommissioningItem['status'], string> = {
	pass: 'PASS',
	fail: 'FAIL',
	not_measured: 'NOT MEASURED'
};

/**
 * The commissioning certificate on A4, in a standard font (text outside WinAnsi is
 * rewritten: "MOhm", "<="): number, date, site, system, every module's place, each
 * checklist item with its reason, sign-off, warranty, and the cautions; every page ends
 * with the note that local codes take precedence.
 */
export async function certificatePdf(data: CertificateData): Promise<Uint8Array> {
	const doc = await PDFDocument.create();
	doc.setTitle(`Commissioning certificate ${data.certificateNo}`);
	doc.setSubject(`${data.system.name} at ${data.site.name}, commissioned ${data.commissionedOn}`);
	doc.setCreator('Packledger');
	const regular = await doc.embedFont(StandardFonts.Helvetica);
	const bold = await doc.embedFont(StandardFonts.HelveticaBold);
	const charset = new Set(regular.getCharacterSet());
	const clean = (s: string) =>
		[...WIN_ANSI_SWAPS.reduce((t, [re, to]) => t.replace(re, to), s)]
			.map((ch) => (charset.has(ch.codePointAt(0)!) ? ch : '?'))
			.join('');

	const [W, H] = PageSizes.A4;
	const LEFT = 50;
	const WIDTH = W - 2 * LEFT;
	const TOP = H - 50;
	const BOTTOM = 70;
	const ink = rgb(0.05, 0.17, 0.24);
	const soft = rgb(0.21, 0.33, 0.42);
	let page: PDFPage = doc.addPage(PageSizes.A4);
	let y = TOP;

	const wrap = (text: string, font: PDFFont, size: number, width: number): string[] => {
		const lines: string[] = [];
		for (const para of clean(text).split('\n')) {
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
	};
	const ensure = (h: number) => {
		if (y - h < BOTTOM) {
			page = doc.addPage(PageSizes.A4);
			y = TOP;
		}
	};
	const write = (
		text: string,
		o: {
			size?: number;
			font?: PDFFont;
			x?: number;
			width?: number;
			color?: ReturnType<typeof rgb>;
		} = {}
	) => {
		const size = o.size ?? 10;
		const x = LEFT + (o.x ?? 0);
		for (const line of wrap(text, o.font ?? regular, size, o.width ?? WIDTH - (o.x ?? 0))) {
			ensure(size * 1.4);
			page.drawText(line, { x, y: y - size, size, font: o.font ?? regular, color: o.color ?? ink });
			y -= size * 1.4;
		}
	};
	const heading = (text: string) => {
		y -= 10;
		ensure(40);
		write(text, { size: 13, font: bold });
		page.drawLine({
			start: { x: LEFT, y: y + 2 },
			end: { x: LEFT + WIDTH, y: y + 2 },
			thickness: 0.75,
			color: soft
		});
		y -= 6;
	};
	/** A label and its value side by side; the value wraps in its own column. */
	const field = (label: string, value: string) => {
		ensure(14);
		const top = y;
		write(label, { font: bold, width: 140 });
		const afterLabel = y;
		y = top;
		write(value, { x: 150 });
		y = Math.min(y, afterLabel);
	};

	const sys = data.system;
	write('Commissioning certificate', { size: 22, font: bold });
	y -= 4;
	write(`Certificate ${data.certificateNo}`, { size: 14, font: bold });
	write(`Commissioned on ${data.commissionedOn}`, { size: 11, color: soft });

	heading('Site');
	field('Site', data.site.name);
	field('Address', data.site.address);

	heading('System');
	field('System', sys.name);
	field('Module model', `${sys.modelCode} (${sys.modelName})`);
	field(
		'Arrangement',
		`${sys.series} in series x ${sys.parallel} in parallel (${sys.series * sys.parallel} modules)`
	);
	field(
		'String voltage',
		`${sys.minV} V minimum, ${sys.nominalV} V nominal, ${sys.maxV} V maximum`
	);
	if (sys.inverterName) field('Inverter', sys.inverterName);

	heading('Modules');
	for (const m of data.modules) field(`String ${m.stringNo}, position ${m.position}`, m.serial);

	heading('Checklist');
	for (const item of data.items) {
		ensure(30);
		write(`${STATUS_WORDS[item.status]}  ${item.label}`, { font: bold });
		write(item.reason, { x: 12, size: 9, color: soft });
		y -= 3;
	}

	heading('Sign-off');
	field('Technician', data.technicianName);
	field('Licence number', data.licenceNumber);
	field('Handed over to', data.handoverName ?? 'not recorded');

	heading('Warranty');
	field('Starts', data.warranty.startsOn);
	field('Ends', data.warranty.endsOn);
	write(
		`Each module listed above is warranted for ${data.warranty.years} years from commissioning, or its rated cycles, whichever comes first, on the terms recorded at commissioning.`,
		{ size: 9, color: soft }
	);

	heading('Cautions');
	for (const c of data.cautions) {
		ensure(26);
		write(c.title, { font: bold, size: 10 });
		write(c.text, { x: 12, size: 9 });
	}

	const pages = doc.getPages();
	pages.forEach((p, i) => {
		const note = wrap(data.codesNote, bold, 8, WIDTH);
		note.forEach((line, j) =>
			p.drawText(line, { x: LEFT, y: 40 - j * 10, size: 8, font: bold, color: ink })
		);
		p.drawText(clean(`${data.certificateNo} · page ${i + 1} of ${pages.length}`), {
			x: LEFT,
			y: 40 - note.length * 10 - 2,
			size: 8,
			font: regular,
			color: soft
		});
	});
	return doc.save({ useObjectStreams: false });
}
