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
	let data: Uint8Array;
	if (type.startsWith('multipart/form-data')) {
		const form = await request.formData().catch(() => null);
		const file = form?.get('file');
		if (!(file instanceof File)) error(400, 'Attach the CSV file in a form field named “file”.');
		name = file.name || name;
		data = new Uint8Array(await file.arrayBuffer());
	} else {
		data = await readBody(request, declared, maxBytes);
	}
	if (data.byteLength > maxBytes)
		error(
			413,
			`The file is ${mb(data.byteLength)}; the limit is ${mb(maxBytes)}. Split it into smaller files and send them one by one.`
		);
	if (data.byteLength === 0)
		error(400, 'The file is empty. Export the results from the rig again.');
	const bom = data[0] === 0xef && data[1] === 0xbb && data[2] === 0xbf;
	let content: string;
	let exact = !bom;
	try {
		content = new TextDecoder('utf-8', { fatal: true }).decode(data);
	} catch {
		content = new TextDecoder('utf-8').decode(data);
		exact = false;
	}
	return { name, content, bytes: data.byteLength, ...(exact ? { data } : {}) };
}

/** The first buffer of a body sent without its length; it doubles as the body grows. */
const FIRST_BUFFER = 64 * 1024;

/**
 * A raw body's bytes, read from its stream straight into one buffer: of the declared length
 * when there is one, else grown by doubling. `request.arrayBuffer()` keeps every chunk until it
 * joins them into a second buffer of the same size (8.5 MB twice for 100,000 rig rows); here
 * each chunk is garbage once copied. Reading stops, and the answer is a 413, as soon as the
 * body passes `maxBytes`, whatever length it declared.
 */
async function readBody(request: Request, declared: number, maxBytes: number): Promise<Uint8Array> {
	if (!request.body) return new Uint8Array(0);
	let buf = new Uint8Array(declared > 0 ? declared : FIRST_BUFFER);
	let at = 0;
	const reader = request.body.getReader();
	for (;;) {
		const { done, value } = await reader.read();
		if (done) break;
		if (at + value.byteLength > maxBytes) {
			await reader.cancel().catch(() => {});
			error(
				413,
				`The file is over the limit of ${(maxBytes / 1024 / 1024).toFixed(1)} MB. Split it into smaller files and send them one by one.`
			);
		}
		if (at + value.byteLength > buf.byteLength) {
			const bigger = new Uint8Array(
				Math.min(maxBytes, Math.max(at + value.byteLength, buf.byteLength * 2))
			);
			bigger.set(buf.subarray(0, at));
			buf = bigger;
		}
		buf.set(value, at);
		at += value.byteLength;
	}
	return buf.subarray(0, at);
}
