/** Fieldkiln's version, written into every exported file's `asset.generator`. Keep in step with package.json (a test checks). */
export const FIELDKILN_VERSION = '0.1.0';
