/**
 * Limits of the interactive preview, in their own module so forms in the browser can show them without pulling
 * in the server-side analysis code. 199 surrogates answer within about a second and resolve p down to 0.005.
 */
export const PREVIEW_MAX_SURROGATES = 199;
