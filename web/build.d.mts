/** Builds the page into outDir (default dist/web); answers the paths of index.html, app.js, app.css. */
export function buildPage(outDir?: string, options?: { minify?: boolean }): Promise<string[]>;
