/** Package version of tuningfork (kept equal to package.json; a test checks it). */
export const VERSION = '0.0.0';
