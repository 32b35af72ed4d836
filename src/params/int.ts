import type { ParamMatcher } from '@sveltejs/kit';

/** Record ids in URLs: a positive whole number in plain digits, so `abc` or `0x10` is a 404, not a query. */
export const match: ParamMatcher = (param) => /^[1-9]\d{0,15}$/.test(param);
