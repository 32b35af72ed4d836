/**
 * The parts of the commissioning form that need no schema library: the cautions and reading a
 * typed number. The page's first paint uses only these, so it does not wait for zod
 * (`./commissioning` re-exports them). Safe for the browser.
 */

/** The cautions shown before any work on a battery, on the page and the certificate: `$lib/safety`. */
export { CAUTIONS as COMMISSIONING_CAUTIONS, CODES_TAKE_PRECEDENCE } from '$lib/safety';

/** Form text to a number: the one decimal rule, shared with every form. */
export { readDecimal } from '$lib/domain/decimal';

// The grid's flat form names are gathered by nestForm in ./commissioning-nest, which only the
// schema (loaded after the first paint) needs.
