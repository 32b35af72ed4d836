import { PageSizes, PDFDocument, rgb, StandardFonts, type PDFFont, type PDFPage } from 'pdf-lib';
import QRCode from 'qrcode';
import type { CommissioningItem } from '$lib/domain/commissioning';
import { signaturePath, type Signature } from '$lib/schemas/signature';
import type { CertificateData } from './certificates';

export interface CertificateExtras {
	/** Photo bytes in certificate order; JPEG and PNG are drawn as thumbnails, others are listed. */
	photos: { bytes: Uint8Array; contentType: string; caption: string | null }[];
	/** The verification page the QR code opens. */
	verifyUrl: string;
}

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
	not_measured: 'NOT MEASURED',
	implausible: 'IMPLAUSIBLE'
};

/**
 * The commissioning certificate on A4, in a standard font (text outside WinAnsi is
 * rewritten: "MOhm", "<="): number, date, the assembler and the installing company, site,
 * system and its fault current, every module's place, every reading with its limit, each
 * checklist item with its reason, the rule set and its citations, photos, sign-off with both
 * drawn signatures, warranty, the cautions, and a QR code to the verification page with the
 * content hash. Dark ink on white only, so it prints legibly in greyscale; every page ends
 * with the note that local codes take precedence.
 */
export async function certificatePdf(
	data: CertificateData,
	extras: CertificateExtras = { photos: [], verifyUrl: '' }
): Promise<Uint8Array> {
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
	/** A section heading, kept on one page with at least `keep` points of what follows it. */
	const heading = (text: string, keep = 40) => {
		y -= 10;
		ensure(30 + keep);
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
	const moduleMaxV = Math.round((sys.maxV / sys.series) * 1000) / 1000;
	const QR = 92;
	if (extras.verifyUrl) {
		const png = await QRCode.toBuffer(extras.verifyUrl, {
			margin: 4,
			errorCorrectionLevel: 'M',
			scale: 8
		});
		const img = await doc.embedPng(png);
		page.drawImage(img, { x: LEFT + WIDTH - QR, y: TOP - QR, width: QR, height: QR });
	}
	const headWidth = WIDTH - QR - 10;
	write('Commissioning certificate', { size: 22, font: bold, width: headWidth });
	y -= 4;
	write(`Certificate ${data.certificateNo}`, { size: 14, font: bold, width: headWidth });
	write(`Commissioned on ${data.commissionedOn}`, { size: 11, color: soft, width: headWidth });
	write(`Modules made by ${data.assemblerName}; installed by ${data.installerName}.`, {
		size: 10,
		width: headWidth
	});
	if (extras.verifyUrl)
		write('Scan the code to check that this certificate is genuine and unchanged.', {
			size: 8,
			color: soft,
			width: headWidth
		});
	y = Math.min(y, TOP - QR - 4);

	heading('Parties');
	field('Assembler', data.assemblerName);
	field('Installing company', data.installerName);
	field('Technician', `${data.technicianName}, electrical licence ${data.licenceNumber}`);
	field('Owner (handover)', data.handoverName ?? 'not recorded');

	heading('Site');
	field('Site', data.site.name);
	field('Address', data.site.address);

	heading('System');
	field('System', sys.name);
	field('Module model', `${sys.modelCode} (${sys.modelName})`);
	field(
		'Arrangement',
		`${sys.series} in series × ${sys.parallel} in parallel (${sys.series * sys.parallel} modules)`
	);
	field(
		'String voltage',
		`${sys.minV} V minimum, ${sys.nominalV} V nominal, ${sys.maxV} V maximum`
	);
	if (sys.inverterName) field('Inverter', sys.inverterName);
	field(
		'Fault current',
		data.shortCircuitA === null
			? 'not computed (module internal resistance not on record)'
			: `${(data.shortCircuitA / 1000).toFixed(1)} kA (${data.shortCircuitA} A) prospective short-circuit current: ` +
					`${sys.parallel} string${sys.parallel === 1 ? '' : 's'} in parallel × ${moduleMaxV} V module maximum ÷ ` +
					`${data.internalResistanceMOhm ?? '?'} mΩ module internal resistance, cable resistance neglected (conservative)`
	);

	heading('Modules');
	for (const m of data.modules) field(`String ${m.stringNo}, position ${m.position}`, m.serial);

	heading('Readings and their limits', 60);
	{
		const cols = [0, 170, 290];
		ensure(16);
		const top = y;
		(['Reading', 'Value', 'Limit'] as const).forEach((h, i) => {
			y = top;
			write(h, { font: bold, size: 9, x: cols[i], width: (cols[i + 1] ?? WIDTH) - cols[i] - 6 });
		});
		for (const r of data.readings) {
			ensure(14);
			const rowTop = y;
			let lowest = y;
			const cells = [`${r.group}: ${r.what}`, r.value, r.limit];
			cells.forEach((text, i) => {
				y = rowTop;
				write(text, {
					size: 9,
					x: cols[i],
					width: (cols[i + 1] ?? WIDTH) - cols[i] - 6,
					font: i === 1 ? bold : regular
				});
				lowest = Math.min(lowest, y);
			});
			// The rule sits below the descenders of the row's last line, then a little air.
			y = lowest - 1;
			page.drawLine({
				start: { x: LEFT, y },
				end: { x: LEFT + WIDTH, y },
				thickness: 0.3,
				color: soft
			});
			y -= 3;
		}
	}

	heading('Checklist', 50);
	for (const item of data.items) {
		ensure(30);
		write(`${STATUS_WORDS[item.status]}  ${item.label}`, { font: bold });
		write(item.reason, { x: 12, size: 9, color: ink });
		y -= 3;
	}

	heading('Rule set');
	if (data.ruleSet) {
		field(
			'Judged by',
			`${data.ruleSet.name}; ${data.ruleSet.market === 'default' ? 'the default set (for markets without a set of their own)' : `market ${data.ruleSet.market}`}; version ${data.ruleSet.version}, in force from ${data.ruleSet.effectiveFrom}`
		);
		const c = data.ruleSet.citations;
		const cites: [string, string][] = [
			['Module voltages', c.moduleVoltages],
			['String voltages', c.stringSum],
			['Insulation', c.insulation],
			['Device current', c.overcurrent],
			['Device voltage', c.voltageRating],
			['Breaking capacity', c.breakingCapacity],
			['Device per string', c.stringProtection],
			['Implausible readings', c.plausibility]
		];
		for (const [k, v] of cites) field(k, v);
	} else {
		write('Judged before rule sets were recorded.', { size: 9 });
	}

	if (extras.photos.length) {
		const TW = 150;
		const TH = 112;
		heading('Photos', TH + 20);
		let col = 0;
		for (const p of extras.photos) {
			let img;
			try {
				img =
					p.contentType === 'image/jpeg'
						? await doc.embedJpg(p.bytes)
						: p.contentType === 'image/png'
							? await doc.embedPng(p.bytes)
							: null;
			} catch {
				img = null;
			}
			if (col === 0) ensure(TH + 22);
			const x = LEFT + col * (TW + 15);
			if (img) {
				const k = Math.min(TW / img.width, TH / img.height);
				page.drawImage(img, { x, y: y - TH, width: img.width * k, height: img.height * k });
			} else {
				page.drawRectangle({
					x,
					y: y - TH,
					width: TW,
					height: TH,
					borderColor: soft,
					borderWidth: 0.5
				});
				page.drawText(clean('(photo kept in the register)'), {
					x: x + 6,
					y: y - TH / 2,
					size: 8,
					font: regular,
					color: ink
				});
			}
			if (p.caption)
				page.drawText(clean(wrap(p.caption, regular, 8, TW)[0] ?? ''), {
					x,
					y: y - TH - 10,
					size: 8,
					font: regular,
					color: ink
				});
			col++;
			if (col === 3) {
				col = 0;
				y -= TH + 18;
			}
		}
		if (col) y -= TH + 18;
	}

	heading('Sign-off', 100);
	const signBox = (who: string, name: string, sig: Signature | null, x: number) => {
		const w = 230;
		const h = 70;
		page.drawRectangle({ x, y: y - h, width: w, height: h, borderColor: soft, borderWidth: 0.5 });
		if (sig) {
			const k = Math.min((w - 10) / sig.w, (h - 10) / sig.h);
			page.drawSvgPath(signaturePath(sig, k), {
				x: x + 5 + (w - 10 - sig.w * k) / 2,
				y: y - 5 - (h - 10 - sig.h * k) / 2,
				borderColor: rgb(0, 0, 0),
				borderWidth: 1.2
			});
		} else {
			page.drawText('not signed', { x: x + 8, y: y - h / 2, size: 9, font: regular, color: soft });
		}
		page.drawText(clean(`${who}: ${name}`), { x, y: y - h - 11, size: 9, font: bold, color: ink });
	};
	ensure(100);
	signBox(
		'Technician',
		`${data.technicianName} (licence ${data.licenceNumber})`,
		data.signatures.technician,
		LEFT
	);
	signBox('Owner', data.handoverName ?? 'not recorded', data.signatures.owner, LEFT + 265);
	y -= 92;

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
		const hash = data.contentHash ? ` · content SHA-256 ${data.contentHash}` : '';
		p.drawText(clean(`${data.certificateNo} · page ${i + 1} of ${pages.length}${hash}`), {
			x: LEFT,
			y: 40 - note.length * 10 - 2,
			size: 8,
			font: regular,
			color: soft
		});
	});
	return doc.save({ useObjectStreams: false });
}
