import { error } from '@sveltejs/kit';

/** Reads an uploaded text file from a raw body (`text/csv`) or a multipart form field `file`, within a size limit. */
export async function readUploadedText(
	request: Request,
	url: URL,
	maxBytes: number
): Promise<{ name: string; content: string; bytes: number }> {
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
	return { name, content: new TextDecoder('utf-8').decode(buffer), bytes: buffer.byteLength };
}
