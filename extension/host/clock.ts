/** Imported first by extension.ts, so this runs before any other module of the bundle is evaluated. */
export const bundleStart = performance.now();
