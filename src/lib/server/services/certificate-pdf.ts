import { rgb } from 'pdf-lib';
import QRCode from 'qrcode';
import type { CommissioningItem } from '$lib/domain/commissioning';
import { signaturePath, type Signature } from '$lib/schemas/signature';
import type { CertificateData } from './certificates';
import { PdfWriter } from './pdf-writer';
import { NEUTRAL } from '$lib/domain/format';

export interface CertificateExtras {
	/** Photo bytes in certificate order; JPEG and PNG are drawn as thumbnails, others are listed. */
	photos: { bytes: Uint8Array; contentType: string; caption: string | null }[];
	/** The verification page the QR code opens. */
	verifyUrl: string;
}

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
	const w = await PdfWriter.create();
	w.doc.setTitle(`Commissioning certificate ${data.certificateNo}`);
	w.doc.setSubject(`${data.system.name} at ${data.site.name}, commissioned ${data.commissionedOn}`);
	w.doc.setCreator('Packledger');

	const sys = data.system;
	const moduleMaxV = Math.round((sys.maxV / sys.series) * 1000) / 1000;
	const QR = 92;
	if (extras.verifyUrl) {
		const png = await QRCode.toBuffer(extras.verifyUrl, {
			margin: 4,
			errorCorrectionLevel: 'M',
			scale: 8
		});
		const img = await w.doc.embedPng(png);
		w.page.drawImage(img, { x: w.LEFT + w.WIDTH - QR, y: w.TOP - QR, width: QR, height: QR });
	}
	const headWidth = w.WIDTH - QR - 10;
	w.write('Commissioning certificate', { size: 22, font: w.bold, width: headWidth });
	w.y -= 4;
	w.write(`Certificate ${data.certificateNo}`, { size: 14, font: w.bold, width: headWidth });
	w.write(`Commissioned on ${data.commissionedOn}`, { size: 11, color: w.soft, width: headWidth });
	w.write(`Modules made by ${data.assemblerName}; installed by ${data.installerName}.`, {
		size: 10,
		width: headWidth
	});
	if (extras.verifyUrl)
		w.write('Scan the code to check that this certificate is genuine and unchanged.', {
			size: 8,
			color: w.soft,
			width: headWidth
		});
	w.y = Math.min(w.y, w.TOP - QR - 4);

	w.heading('Parties');
	w.field('Assembler', data.assemblerName);
	w.field('Installing company', data.installerName);
	w.field('Technician', `${data.technicianName}, electrical licence ${data.licenceNumber}`);
	w.field('Owner (handover)', data.handoverName ?? 'not recorded');

	w.heading('Site');
	w.field('Site', data.site.name);
	w.field('Address', data.site.address);

	w.heading('System');
	w.field('System', sys.name);
	w.field('Module model', `${sys.modelCode} (${sys.modelName})`);
	w.field(
		'Arrangement',
		`${sys.series} in series × ${sys.parallel} in parallel (${sys.series * sys.parallel} modules)`
	);
	w.field(
		'String voltage',
		`${sys.minV} V minimum, ${sys.nominalV} V nominal, ${sys.maxV} V maximum`
	);
	if (sys.inverterName) w.field('Inverter', sys.inverterName);
	w.field(
		'Fault current',
		data.shortCircuitA === null
			? 'not computed (module internal resistance not on record)'
			: `${(data.shortCircuitA / 1000).toFixed(1)} kA (${NEUTRAL.number(data.shortCircuitA)} A) prospective short-circuit current: ` +
					`${sys.parallel} string${sys.parallel === 1 ? '' : 's'} in parallel × ${moduleMaxV} V module maximum ÷ ` +
					`${data.internalResistanceMOhm ?? '?'} mΩ module internal resistance, cable resistance neglected (conservative)`
	);

	w.heading('Modules');
	for (const m of data.modules) w.field(`String ${m.stringNo}, position ${m.position}`, m.serial);

	w.heading('Readings and their limits', 60);
	{
		const cols = [0, 170, 290];
		w.ensure(16);
		const top = w.y;
		(['Reading', 'Value', 'Limit'] as const).forEach((h, i) => {
			w.y = top;
			w.write(h, {
				font: w.bold,
				size: 9,
				x: cols[i],
				width: (cols[i + 1] ?? w.WIDTH) - cols[i] - 6
			});
		});
		for (const r of data.readings) {
			w.ensure(14);
			const rowTop = w.y;
			let lowest = w.y;
			const cells = [`${r.group}: ${r.what}`, r.value, r.limit];
			cells.forEach((text, i) => {
				w.y = rowTop;
				w.write(text, {
					size: 9,
					x: cols[i],
					width: (cols[i + 1] ?? w.WIDTH) - cols[i] - 6,
					font: i === 1 ? w.bold : w.regular
				});
				lowest = Math.min(lowest, w.y);
			});
			// The rule sits below the descenders of the row's last line, then a little air.
			w.y = lowest - 1;
			w.page.drawLine({
				start: { x: w.LEFT, y: w.y },
				end: { x: w.LEFT + w.WIDTH, y: w.y },
				thickness: 0.3,
				color: w.soft
			});
			w.y -= 3;
		}
	}

	w.heading('Checklist', 50);
	for (const item of data.items) {
		w.ensure(30);
		w.write(`${STATUS_WORDS[item.status]}  ${item.label}`, { font: w.bold });
		w.write(item.reason, { x: 12, size: 9, color: w.ink });
		w.y -= 3;
	}

	w.heading('Rule set');
	if (data.ruleSet) {
		w.field(
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
		for (const [k, v] of cites) w.field(k, v);
	} else {
		w.write('Judged before rule sets were recorded.', { size: 9 });
	}

	if (extras.photos.length) {
		w.heading('Photos', 112 + 20);
		await w.thumbnails(extras.photos, '(photo kept in the register)');
	}

	w.heading('Sign-off', 100);
	const signBox = (who: string, name: string, sig: Signature | null, x: number) => {
		const bw = 230;
		const bh = 70;
		w.page.drawRectangle({
			x,
			y: w.y - bh,
			width: bw,
			height: bh,
			borderColor: w.soft,
			borderWidth: 0.5
		});
		if (sig) {
			const k = Math.min((bw - 10) / sig.w, (bh - 10) / sig.h);
			w.page.drawSvgPath(signaturePath(sig, k), {
				x: x + 5 + (bw - 10 - sig.w * k) / 2,
				y: w.y - 5 - (bh - 10 - sig.h * k) / 2,
				borderColor: rgb(0, 0, 0),
				borderWidth: 1.2
			});
		} else {
			w.page.drawText('not signed', {
				x: x + 8,
				y: w.y - bh / 2,
				size: 9,
				font: w.regular,
				color: w.soft
			});
		}
		w.page.drawText(w.clean(`${who}: ${name}`), {
			x,
			y: w.y - bh - 11,
			size: 9,
			font: w.bold,
			color: w.ink
		});
	};
	w.ensure(100);
	signBox(
		'Technician',
		`${data.technicianName} (licence ${data.licenceNumber})`,
		data.signatures.technician,
		w.LEFT
	);
	signBox('Owner', data.handoverName ?? 'not recorded', data.signatures.owner, w.LEFT + 265);
	w.y -= 92;

	w.heading('Warranty');
	w.field('Starts', data.warranty.startsOn);
	w.field('Ends', data.warranty.endsOn);
	w.write(
		`Each module listed above is warranted for ${data.warranty.years} years from commissioning, or its rated cycles, whichever comes first, on the terms recorded at commissioning.`,
		{ size: 9, color: w.soft }
	);

	w.heading('Cautions');
	for (const c of data.cautions) {
		w.ensure(26);
		w.write(c.title, { font: w.bold, size: 10 });
		w.write(c.text, { x: 12, size: 9 });
	}

	const pages = w.doc.getPages();
	pages.forEach((p, i) => {
		const note = w.wrap(data.codesNote, w.bold, 8, w.WIDTH);
		note.forEach((line, j) =>
			p.drawText(line, { x: w.LEFT, y: 40 - j * 10, size: 8, font: w.bold, color: w.ink })
		);
		const hash = data.contentHash ? ` · content SHA-256 ${data.contentHash}` : '';
		p.drawText(w.clean(`${data.certificateNo} · page ${i + 1} of ${pages.length}${hash}`), {
			x: w.LEFT,
			y: 40 - note.length * 10 - 2,
			size: 8,
			font: w.regular,
			color: w.soft
		});
	});
	return w.doc.save({ useObjectStreams: false });
}
