/**
 * Screenshots of the panel's "Reply grounding" section on a sample log, with the analysis run by the
 * real core (audit with `analysis: true`, the view model with the core's `words`). Same page set-up
 * as shoot.ts (built dist/webview/main.js under a nonce CSP, fake acquireVsCodeApi answered here).
 *
 *   npm run build && node test/webview/harness/groundingShot.mjs [log.jsonl] [line ...]
 * Writes docs/screenshots/panel-{theme}-{log}-grounding-line{N}.png and prints what each turn shows.
 */
import { chromium } from 'playwright-core';
import { mkdirSync, readFileSync } from 'node:fs';
import { basename, join } from 'node:path';
import { auditText } from '../../../extension/core/audit/audit';
import { words } from '../../../extension/core/analysis/index';
import { readLogText } from '../../../extension/core/log/reader';
import { buildOverview, conversationRows, toTurnDetail, turnPage } from '../../../extension/core/view/viewModels';
import type { AuditedLog, AuditedRecord } from '../../../extension/core/view/audited';
import type { HostMessage, WebviewMessage } from '../../../extension/protocol/messages';
import { parseHostMessage } from '../../../extension/protocol/validate';

const ROOT = process.cwd();
const BASE = 'http://spillway.test';
const OUT = join(ROOT, 'docs/screenshots');
const HERE = join(ROOT, 'test/webview/harness');

async function main(): Promise<void> {
  const path = process.argv[2] ?? join(ROOT, 'sample-workspace/logs/lost-property.jsonl');
  const text = readFileSync(path, 'utf8');
  const report = await auditText(text, { file: path }, { analysis: true });
  const byLine = new Map(readLogText(text).records.map((r) => [r.line, r.record]));
  const records: AuditedRecord[] = report.records.map((ledger) => ({ line: ledger.line, ledger, record: byLine.get(ledger.line)! }));
  const log: AuditedLog = { file: basename(path), records, issues: report.errors };
  const lines = process.argv.slice(3).map(Number);
  const targets = lines.length ? lines : records.map((r) => r.line);
  const reply = (m: WebviewMessage): HostMessage[] => {
    switch (m.type) {
      case 'requestTurns':
        return [{ type: 'turns', requestId: m.requestId, ...turnPage(log, m.offset, m.limit) }];
      case 'requestTurn': {
        const r = records.find((x) => x.line === m.line);
        return r ? [{ type: 'turn', requestId: m.requestId, detail: toTurnDetail(r, words) }] : [];
      }
      case 'requestConversation':
        return [{ type: 'conversation', requestId: m.requestId, conversation: m.conversation, rows: conversationRows(log, m.conversation) }];
      case 'requestOverview':
        return [{ type: 'overview', requestId: m.requestId, overview: buildOverview(log) }];
      default:
        return [];
    }
  };
  mkdirSync(OUT, { recursive: true });
  const browser = await chromium.launch({ executablePath: '/usr/bin/chromium', headless: true, args: ['--no-sandbox', '--disable-gpu', '--no-first-run', '--disable-background-networking'] });
  const name = basename(path, '.jsonl');
  try {
    for (const theme of ['dark', 'light'] as const) {
      for (const line of targets) {
        const ctx = await browser.newContext({ viewport: { width: 820, height: 900 }, deviceScaleFactor: 1 });
        const page = await ctx.newPage();
        const nonce = 'g' + Math.random().toString(36).slice(2);
        const csp = `default-src 'none'; style-src ${BASE}; script-src 'nonce-${nonce}'; img-src ${BASE}; font-src ${BASE};`;
        const html = `<!DOCTYPE html><html lang="en"><head><meta charset="utf-8"><meta http-equiv="Content-Security-Policy" content="${csp}">
<link rel="stylesheet" href="${BASE}/theme-${theme}.css"><link rel="stylesheet" href="${BASE}/panel.css"><title>grounding</title></head>
<body class="vscode-${theme}"><main id="app"></main>
<script nonce="${nonce}">(() => { let state; const api = { postMessage: (m) => window.__host(m), getState: () => state, setState: (s) => { state = s; } }; window.acquireVsCodeApi = () => api; })();</script>
<script nonce="${nonce}" src="${BASE}/main.js"></script></body></html>`;
        await page.route(`${BASE}/**`, (route) => {
          const file = new URL(route.request().url()).pathname.slice(1);
          if (file === 'panel.html') return route.fulfill({ contentType: 'text/html', body: html });
          if (file === 'main.js') return route.fulfill({ contentType: 'text/javascript', body: readFileSync(join(ROOT, 'dist/webview/main.js')) });
          if (file === 'panel.css') return route.fulfill({ contentType: 'text/css', body: readFileSync(join(ROOT, 'dist/webview/panel.css')) });
          const m = /^theme-(\w+)\.css$/.exec(file);
          if (m) return route.fulfill({ contentType: 'text/css', body: readFileSync(join(HERE, 'themes', `${m[1]}.css`)) });
          return route.fulfill({ status: 404, body: '' });
        });
        const send = (msg: HostMessage) => page.evaluate((x) => window.postMessage(x, '*'), msg);
        await page.exposeBinding('__host', async (_src, msg: WebviewMessage) => {
          if (msg.type === 'ready') await send({ type: 'logOpened', file: log.file, turns: records.length, selectLine: line });
          for (const r of reply(msg)) {
            const checked = parseHostMessage(r);
            if (!checked.ok) throw new Error(`invalid host message: ${checked.error}`);
            await send(r);
          }
        });
        await page.goto(`${BASE}/panel.html`);
        const region = page.locator('[role="region"][aria-label="Reply grounding"]');
        await region.waitFor({ timeout: 15_000 });
        await page.evaluate(() => new Promise((r) => requestAnimationFrame(() => setTimeout(r, 50))));
        const labels = await region.locator('li.g-sentence').evaluateAll((els) => els.map((e) => `${e.querySelector('.g-label')?.textContent} | ${e.querySelector('.g-support')?.textContent}`));
        const out = join(OUT, `panel-${theme}-${name}-grounding-line${line}.png`);
        await region.screenshot({ path: out });
        if (theme === 'dark') console.log(`line ${line}:\n  ${labels.join('\n  ')}`);
        // Click the passage a lost sentence rests on: the segment text shows its cut.
        const lostButton = region.locator('li.g-lost button').first();
        if ((await lostButton.count()) > 0) {
          await lostButton.focus();
          await page.keyboard.press('Enter');
          await page.waitForFunction(() => document.querySelector('.passage')?.getAttribute('data-segment') !== null);
          const shown = await page.evaluate(() => document.querySelector('.passage')?.getAttribute('data-segment'));
          await page.locator('section[aria-labelledby="h-text"]').screenshot({ path: join(OUT, `panel-${theme}-${name}-grounding-line${line}-cut.png`) });
          if (theme === 'dark') console.log(`  Enter on the lost sentence's passage → segment text shows ${shown}`);
        }
        const injected = await region.locator('img, script, iframe, a').count();
        if (injected) console.log(`  !! ${injected} injected elements in the grounding section`);
        await ctx.close();
      }
    }
  } finally {
    await browser.close();
  }
}

main().catch((e) => {
  console.error(e);
  process.exit(1);
});
