/**
 * Scenario 5: a log whose passages carry HTML/script payloads. In the real webview (VS Code's
 * iframes and CSP on top of ours) every payload shows as literal text; no script runs (the
 * payloads would set `window.__spillwayPwned` or open a dialog); no element is injected; no
 * request leaves for anything but our own code-server.
 */
import type { Ctx } from '../context';
import { assert, cssString, skip } from '../assert';
import { goToLine, openFile, sleep } from '../workbench';
import { recordAt, showPanel, waitPanelTurn } from './common';
import { existsSync } from 'node:fs';
import { join } from 'node:path';

export const PAYLOAD_LOG = 'logs/hostile-payloads.jsonl';

export const payloads = {
  id: '5-payloads',
  title: 'hostile payloads render as text: no script runs, nothing injected, no request leaves',
  async run(ctx: Ctx): Promise<void> {
    if (!existsSync(join(ctx.repo, 'sample-workspace', PAYLOAD_LOG))) skip(`${PAYLOAD_LOG} is not in sample-workspace`);
    const report = await ctx.audit(PAYLOAD_LOG);
    assert(report.records.length > 0, `audit found no records in ${PAYLOAD_LOG}`);
    const dialogs: string[] = [];
    const onDialog = (d: { message(): string; dismiss(): Promise<void> }) => {
      dialogs.push(d.message());
      void d.dismiss();
    };
    ctx.page.on('dialog', onDialog);
    const firstRequest = ctx.requests.length;
    const firstConsole = ctx.console.length;
    try {
      await openFile(ctx.page, PAYLOAD_LOG);
      let checkedPassages = 0;
      for (const r of report.records.slice(0, 4)) {
        await goToLine(ctx.page, r.line);
        const frame = await showPanel(ctx);
        await waitPanelTurn(frame, { line: r.line, segmentIds: r.segments.map((s) => s.id) });
        const rec = await recordAt(ctx, PAYLOAD_LOG, r.line);
        for (const seg of rec.segments) {
          if (!/[<>]/.test(seg.text)) continue;
          await frame.locator(`[role="grid"] tbody tr[data-id=${cssString(seg.id)}]`).click();
          const box = frame.locator(`.passage[data-segment=${cssString(seg.id)}] .passage-text`);
          await box.waitFor({ state: 'visible', timeout: 10_000 });
          const shown = (await box.locator('[data-part="kept"]').textContent() ?? '') + (await box.locator('[data-part="spilled"]').textContent() ?? '');
          assert(shown === seg.text, `${seg.id} on line ${r.line} is not shown as its literal text: "${shown.slice(0, 120)}"`);
          const injected = await box.evaluate((el) => [...el.querySelectorAll('script, img, iframe, svg, style, a, object, embed, textarea, b')].map((e) => e.tagName));
          assert(injected.length === 0, `${seg.id}: payload became elements ${injected.join(',')}`);
          checkedPassages++;
        }
      }
      await sleep(1500); // give any onerror/onload a chance to fire before looking
      for (const f of ctx.page.frames()) {
        if (f.isDetached()) continue;
        const pwned = await f.evaluate(() => (window as unknown as { __spillwayPwned?: unknown }).__spillwayPwned).catch(() => undefined);
        assert(pwned === undefined, `window.__spillwayPwned = ${String(pwned)} in frame ${f.url()}`);
      }
      assert(dialogs.length === 0, `a payload opened a dialog: ${dialogs.join(', ')}`);
      const consoleHits = ctx.console.slice(firstConsole).filter((m) => /__spillwayPwned|Content Security Policy|Refused to (execute|load)/i.test(m.text));
      assert(consoleHits.length === 0, `console shows execution or blocked injection: ${consoleHits.map((m) => m.text).join(' | ').slice(0, 800)}`);
      // Every request any webview frame (or its resource service worker) made during the whole run.
      const origin = new URL(ctx.server.url).origin;
      const reqs = ctx.requests.filter((q) => q.fromWebview);
      assert(reqs.some((q) => /webview\/main\.js/.test(q.url)), `the request log holds no load of the panel's own script: the webview request check would be blind (${reqs.length} webview requests)`);
      // VS Code names webview resources https://<authority>.vscode-resource.vscode-cdn.net/<path>; its
      // service worker answers them from the server, so they never leave. Only our own extension's files count.
      const ownResource = (u: string) => {
        try {
          const url = new URL(u);
          return url.hostname.endsWith('.vscode-resource.vscode-cdn.net') && decodeURIComponent(url.pathname).startsWith(ctx.server.extensionDir + '/');
        } catch {
          return false;
        }
      };
      const remote = reqs.filter((q) => !q.url.startsWith(origin) && !/^(data|blob):/.test(q.url) && !ownResource(q.url));
      const payloadFetch = ctx.requests.slice(firstRequest).filter((q) => /\/x(\?|$)/.test(q.url));
      assert(remote.length === 0, `webview requested outside ${origin}: ${remote.map((q) => q.url).join(', ')}`);
      assert(payloadFetch.length === 0, `a payload's <img src=x> was fetched: ${payloadFetch.map((q) => q.url).join(', ')}`);
      ctx.log(`${checkedPassages} payload segments shown as text over ${Math.min(4, report.records.length)} turns; ${reqs.length} webview requests, all to ${origin} or our extension's own resources`);
    } finally {
      ctx.page.off('dialog', onDialog);
    }
  },
};
