// The part of s3rver (a local S3-compatible fake, used by tests only) that the tests call; it ships no types.
declare module 's3rver' {
	interface S3rverOptions {
		port?: number;
		address?: string;
		silent?: boolean;
		directory?: string;
		configureBuckets?: { name: string; configs?: unknown[] }[];
	}
	export default class S3rver {
		constructor(options: S3rverOptions);
		run(): Promise<{ address: string; port: number }>;
		close(): Promise<void>;
	}
}
