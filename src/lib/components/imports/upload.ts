/**
 * POSTs a body with upload progress. `fetch` reports no upload progress, so this uses
 * XMLHttpRequest; the answer is read as JSON whatever the status.
 */
export function postWithProgress(
	url: string,
	body: FormData,
	onProgress: (sentFraction: number) => void,
	onUploaded: () => void
): Promise<{ ok: boolean; status: number; json: Record<string, unknown> }> {
	return new Promise((resolve, reject) => {
		const xhr = new XMLHttpRequest();
		xhr.open('POST', url);
		xhr.responseType = 'text';
		xhr.upload.onprogress = (e) => {
			if (e.lengthComputable && e.total > 0) onProgress(e.loaded / e.total);
		};
		xhr.upload.onload = () => onUploaded();
		xhr.onerror = () => reject(new Error('network'));
		xhr.onload = () => {
			let json: Record<string, unknown>;
			try {
				json = JSON.parse(xhr.responseText);
			} catch {
				json = { message: `The server answered ${xhr.status}.` };
			}
			resolve({ ok: xhr.status >= 200 && xhr.status < 300, status: xhr.status, json });
		};
		xhr.send(body);
	});
}
