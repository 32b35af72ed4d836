import { error } from '@sveltejs/kit';

/**
 * Reads an uploaded text file from a raw body (`text/csv`) or a multipart form field `file`,
 * within a size limit. `data` is the file's bytes as received when they are exactly the text's
 * UTF-8 (valid UTF-8, no byte-order mark): a caller that stores the file need not encode the
 * text again (8.5 MB for 100,000 rig rows). Otherwise (invalid bytes, replaced by U+FFFD; a
 * BOM, dropped) `data` is absent.
 */
export async function readUploadedText(
	request: Request,
	url: URL,
	maxBytes: number
): Promise<{ name: string; content: string; bytes: number; data?: Uint8Array }> {
	const mb = (n: number) => `${(n / 1024 / 1024).toFixed(1)} MB`;
	const declared = Number(request.headers.get('content-length') ?? 0);
	if (declared > maxBytes)
		error(
			413,
			`The file is ${mb(declared)}; the limit is ${mb(maxBytes)}. Split it into smaller files and send them one by one.`
		);
	const type = request.headers.get('content-type') ?? '';
	let name = url.searchParams.get('name') ?? request.headers.get('x-file-name') ?? 'upload.csv';
	let buffer: ArrayBuffer;
	if (type.startsWith('multipart/form-data')) {
		const form = await request.formData().catch(() => null);
		const file = form?.get('file');
		if (!(file instanceof File)) error(400, 'Attach the CSV file in a form field named “file”.');
		name = file.name || name;
		buffer = await file.arrayBuffer();
	} else {
		buffer = await request.arrayBuffer();
	}
	if (buffer.byteLength > maxBytes)
		error(
			413,
			`The file is ${mb(buffer.byteLength)}; the limit is ${mb(maxBytes)}. Split it into smaller files and send them one by one.`
		);
	if (buffer.byteLength === 0)
		error(400, 'The file is empty. Export the results from the rig again.');
	const data = new Uint8Array(buffer);
	const bom = data[0] === 0xef && data[1] === 0xbb && data[2] === 0xbf;
	let content: string;
	let exact = !bom;
	try {
		content = new TextDecoder('utf-8', { fatal: true }).decode(data);
	} catch {
		content = new TextDecoder('utf-8').decode(data);
		exact = false;
	}
	return { name, content, bytes: buffer.byteLength, ...(exact ? { data } : {}) };
}
