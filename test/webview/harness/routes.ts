/**
 * The harness pages' origin and routes: the panel HTML the caller built, the built webview bundle and
 * stylesheet, and a VS Code theme stylesheet per theme. Nothing else is served (404), as in a webview.
 */
import type { Page } from 'playwright-core';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';

export const ROOT = process.cwd();
export const BASE = 'http://spillway.test';
export const HERE = join(ROOT, 'test/webview/harness');

export async function routePanel(page: Page, html: () => string): Promise<void> {
  await page.route(`${BASE}/**`, (route) => {
    const name = new URL(route.request().url()).pathname.slice(1);
    if (name === 'panel.html') return route.fulfill({ contentType: 'text/html', body: html() });
    if (name === 'main.js') return route.fulfill({ contentType: 'text/javascript', body: readFileSync(join(ROOT, 'dist/webview/main.js')) });
    if (name === 'panel.css') return route.fulfill({ contentType: 'text/css', body: readFileSync(join(ROOT, 'dist/webview/panel.css')) });
    const m = /^theme-(\w+)\.css$/.exec(name);
    if (m) return route.fulfill({ contentType: 'text/css', body: readFileSync(join(HERE, 'themes', `${m[1]}.css`)) });
    return route.fulfill({ status: 404, body: '' });
  });
}
