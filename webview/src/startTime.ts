/** Imported first by main.ts so the first-paint figure counts from the start of the script. */
export const scriptStart = performance.now();
// Marks show up in the webview developer tools' performance timeline (and the screenshot harness reads them).
performance.mark?.('spillway:script-start');
