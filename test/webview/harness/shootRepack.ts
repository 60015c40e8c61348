/**
 * Screenshots of the Compare and Sweep views on a real re-pack and sweep (the core, not fixtures):
 * loads dist/webview/main.js in Chromium under the host's kind of CSP, answers the panel's
 * comparison requests the way extension/host/repack.ts does (rows from ComparisonCollector, turns
 * read back at their byte offsets and audited), and writes docs/screenshots/repack-*.png. Prints
 * CSP violations and whether a payload ran.
 *
 *   npm run build && node test/webview/harness/runRepack.mjs [log.jsonl] [budget]
 */
import { chromium, type Page } from 'playwright-core';
import { mkdirSync, readFileSync } from 'node:fs';
import { basename, join } from 'node:path';
import { BASE, ROOT, routePanel } from './routes';
import { Accountant } from '../../../extension/core/tokens/accountant';
import { auditRecord } from '../../../extension/core/audit/ledger';
import { parseRecordLine } from '../../../extension/core/log/reader';
import { readLog } from '../../../extension/core/log/reader';
import { ComparisonTotalsBuilder, readLogForRepack, repackLines, sweep } from '../../../extension/core/repack/index';
import { ComparisonCollector, comparisonTurnView, describeRepack, RepackTracker } from '../../../extension/core/view/comparison';
import { repackOutputName } from '../../../extension/core/view/repackForm';
import { toTurnDetail } from '../../../extension/core/view/viewModels';
import type { HostMessage, SweepView, WebviewMessage } from '../../../extension/protocol/messages';

const OUT = join(ROOT, 'docs/screenshots');
type Theme = 'dark' | 'light';

async function main(): Promise<void> {
  const file = process.argv[2] ?? 'sample-workspace/logs/fares-and-passes.jsonl';
  const budget = Number(process.argv[3] ?? 512);
  const src = readFileSync(file);
  const acct = await Accountant.create();
  const collector = new ComparisonCollector(new ComparisonTotalsBuilder());
  const tracker = new RepackTracker(collector);
  let out = '';
  const t0 = performance.now();
  const summary = await repackLines(tracker.items(readLogForRepack([new Uint8Array(src)])), { budget }, { accountant: acct, write: (l) => { tracker.wrote(l); out += l; }, onComparison: tracker.onComparison });
  const seconds = (performance.now() - t0) / 1000;
  const outBytes = Buffer.from(out, 'utf8');
  const store = collector.finish();
  const target = repackOutputName(basename(file), { budget });
  const ready: HostMessage = {
    type: 'comparisonReady',
    reveal: true,
    summary: { generation: 1, source: file, target, options: describeRepack({ budget }), totals: store.totals, rows: store.rows.length, omitted: store.omitted, malformed: summary.malformed, copiedVerbatim: summary.copiedVerbatim, seconds },
  };
  const detail = async (buf: Buffer, offset: number, line: number) => {
    const nl = buf.indexOf(10, offset);
    const p = parseRecordLine(buf.subarray(offset, nl < 0 ? buf.length : nl).toString('utf8'), line);
    if ('issue' in p) throw new Error(p.issue.message);
    await acct.encoder(p.record.model.encoding as 'o200k_base');
    return toTurnDetail({ record: p.record, ledger: await auditRecord({ line, offset, record: p.record }, {}, acct) });
  };
  const sw = await sweep(readLog([new Uint8Array(src)]), { budgets: [256, 512, 768, 1024], plans: ['recent-first', 'evidence-first', 'best-value'] }, { accountant: acct });
  const sweepView: SweepView = { file, records: sw.records, malformed: sw.malformed, budgets: [256, 512, 768, 1024], plans: ['recent-first', 'evidence-first', 'best-value'], ks: [null], cells: sw.cells, priced: false, seconds: 0 };

  const reply = async (m: WebviewMessage): Promise<HostMessage[]> => {
    if (m.type === 'ready') return [{ type: 'logOpened', file: basename(file), turns: summary.records }, ready, { type: 'sweepReady', sweep: sweepView, reveal: false }];
    if (m.type === 'requestComparisonPage') return [{ type: 'comparisonPage', requestId: m.requestId, generation: 1, ...store.page(m.offset, m.limit) }];
    if (m.type === 'requestComparisonTurn') {
      const s = store.at(m.line)!;
      return [{ type: 'comparisonTurn', requestId: m.requestId, view: comparisonTurnView(1, s.row, await detail(src, s.loc.offsetA, s.row.line), await detail(outBytes, s.loc.offsetB, s.row.lineB)) }];
    }
    return [];
  };

  mkdirSync(OUT, { recursive: true });
  const browser = await chromium.launch({ executablePath: process.env.CHROMIUM ?? '/usr/bin/chromium', args: ['--no-sandbox'] });
  try {
    for (const theme of ['dark', 'light'] as Theme[]) {
      const page = await openPanel(browser, theme, reply);
      await page.waitForSelector('.compare-side', { timeout: 20_000 });
      await page.screenshot({ path: join(OUT, `repack-compare-${theme}.png`), fullPage: true });
      await page.evaluate(() => (document.querySelector('vscode-tabs') as HTMLElement & { selectedIndex: number }).selectedIndex = 3);
      await page.waitForTimeout(200);
      await page.screenshot({ path: join(OUT, `repack-sweep-${theme}.png`), fullPage: true });
      const csp = await page.evaluate(() => (window as unknown as { __csp: string[] }).__csp);
      console.log(`${theme}: CSP violations ${csp.length ? csp.join('; ') : 'none'}; compare rows ${await page.locator('tr.cmp-row').count()}; lost rows in the turn ${await page.locator('tr.diff-row-lost').count()}`);
    }
  } finally {
    await browser.close();
  }
  console.log(`re-pack of ${file} to ${budget}: ${store.totals.turns} turns, ${store.totals.worse} worse, ${store.totals.passagesLost} passages lost, in ${seconds.toFixed(2)} s; screenshots in docs/screenshots/repack-*.png`);
}

async function openPanel(browser: import('playwright-core').Browser, theme: Theme, reply: (m: WebviewMessage) => Promise<HostMessage[]>): Promise<Page> {
  const ctx = await browser.newContext({ viewport: { width: 900, height: 1000 }, deviceScaleFactor: 1 });
  const page = await ctx.newPage();
  const nonce = 'repack' + Math.random().toString(36).slice(2);
  const csp = `default-src 'none'; style-src ${BASE}; script-src 'nonce-${nonce}'; img-src ${BASE}; font-src ${BASE};`;
  const html = `<!DOCTYPE html><html lang="en"><head><meta charset="utf-8"><meta http-equiv="Content-Security-Policy" content="${csp}">
<link rel="stylesheet" href="${BASE}/theme-${theme}.css"><link rel="stylesheet" href="${BASE}/panel.css"><title>re-pack harness</title></head>
<body class="vscode-${theme}"><main id="app"></main>
<script nonce="${nonce}">(() => { let state; const api = { postMessage: (m) => window.__spillwayHost(m), getState: () => state, setState: (s) => { state = s; } }; window.acquireVsCodeApi = () => api; })();</script>
<script nonce="${nonce}" src="${BASE}/main.js"></script></body></html>`;
  await routePanel(page, () => html);
  await page.addInitScript(() => {
    const w = window as unknown as { __csp: string[] };
    w.__csp = [];
    document.addEventListener('securitypolicyviolation', (e) => w.__csp.push(`${e.violatedDirective} ${e.blockedURI}`));
  });
  await page.exposeBinding('__spillwayHost', async (_src, msg: WebviewMessage) => {
    for (const r of await reply(msg)) await page.evaluate((x) => window.postMessage(x, '*'), r);
  });
  await page.goto(`${BASE}/panel.html`);
  return page;
}

void main().catch((e) => {
  console.error(e);
  process.exit(1);
});
