// A limit shown on the claim page as well as checked on the server; no zod here, so the page
// does not carry the schema library.

/** Largest inverter log accepted in one upload: 20 MB, years of 5-minute rows. */
export const MAX_LOG_BYTES = 20 * 1024 * 1024;
