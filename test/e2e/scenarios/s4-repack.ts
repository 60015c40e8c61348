/**
 * Scenario 4: run "Re-pack Log Under a New Budget…" with a smaller budget: a new log appears
 * beside the source, the source is byte-identical to before, and the comparison view shows
 * the passages that were lost. Skipped (with that reason) while the command is not contributed.
 */
import { createHash } from 'node:crypto';
import { readdir, readFile } from 'node:fs/promises';
import { join } from 'node:path';
import type { Ctx } from '../context';
import { assert, skip } from '../assert';
import { findWebviewFrame, hideBottomPanel, openFile, runCommand, setSidebarWidth, sleep } from '../workbench';
import { SAMPLE_LOG } from './smoke';
import { showPanel } from './common';

const sha = async (p: string) => createHash('sha256').update(await readFile(p)).digest('hex');

export const repack = {
  id: '4-repack',
  title: 're-pack under a smaller budget: new file beside the log, source untouched, lost passages shown',
  async run(ctx: Ctx): Promise<void> {
    const cmd = ctx.command(['spillway.repackLog', 'spillway.repack'], /Re-pack Log Under a New Budget/i);
    if (!cmd) skip('command not contributed ("Re-pack Log Under a New Budget…" is not in the installed package.json)');
    const report = await ctx.audit(SAMPLE_LOG);
    const minBudget = Math.min(...report.records.map((r) => r.budget));
    const budget = Math.max(256, Math.floor(minBudget / 2));
    const src = join(ctx.server.workspace, SAMPLE_LOG);
    const dir = join(ctx.server.workspace, SAMPLE_LOG.split('/').slice(0, -1).join('/'));
    const before = await sha(src);
    const beforeOriginal = await sha(join(ctx.repo, 'sample-workspace', SAMPLE_LOG));
    assert(before === beforeOriginal, 'the workspace copy differs from sample-workspace before the re-pack');
    const filesBefore = new Set(await readdir(dir));

    await openFile(ctx.page, SAMPLE_LOG);
    await runCommand(ctx.page, cmd.palette, { timeout: 30_000 });
    // Answer the prompts the way a user would: the budget box gets the new budget, every pick
    // list keeps its default (the first entry). Order-agnostic, so the prompts may change.
    const steps: string[] = [];
    for (let i = 0; i < 8; i++) {
      const widget = ctx.page.locator('.quick-input-widget');
      if (!(await widget.isVisible().catch(() => false))) {
        await sleep(800);
        if (!(await widget.isVisible().catch(() => false))) break;
      }
      const title = ((await widget.locator('.quick-input-title, .quick-input-message').allInnerTexts()).join(' ') + ' ' + ((await widget.locator('input').first().getAttribute('placeholder')) ?? '')).trim();
      // Still the command palette (the command has not opened its first prompt yet): wait, answer nothing.
      if ((await widget.locator('input').first().inputValue().catch(() => '')).startsWith('>')) {
        await sleep(500);
        continue;
      }
      const hasList = (await widget.locator('.quick-input-list .monaco-list-row').count()) > 0;
      if (!hasList || /budget/i.test(title)) {
        await widget.locator('input').first().fill(String(budget));
        steps.push(`input "${title}" ← ${budget}`);
      } else steps.push(`pick "${title}" ← default`);
      await ctx.page.keyboard.press('Enter');
      await sleep(700);
    }
    ctx.log(`prompts: ${steps.join(' → ')}`);

    let created: string[] = [];
    for (const deadline = Date.now() + 60_000; Date.now() < deadline; ) {
      created = (await readdir(dir)).filter((f) => !filesBefore.has(f) && f.endsWith('.jsonl') && !f.startsWith('.'));
      if (created.length) break;
      await sleep(500);
    }
    assert(created.length === 1, `expected one new log beside ${SAMPLE_LOG}, found ${created.join(', ') || 'none'}`);
    assert((await sha(src)) === before, `${SAMPLE_LOG} changed during the re-pack`);
    const out = await readFile(join(dir, created[0]!), 'utf8');
    assert(out.trim().split('\n').length === report.records.length + report.errors.length || out.trim().split('\n').length >= report.records.length, `re-packed log has ${out.trim().split('\n').length} lines for ${report.records.length} records`);

    // Expected losses, from the CLI audits of the source and of the new log (its records carry the
    // new decisions): a passage is lost when it was sent before (kept or clipped) and is dropped after.
    const after = await ctx.audit(join(dir, created[0]!));
    const lostByTurn = new Map<string, Set<string>>();
    for (const b of after.records) {
      const a = report.records.find((r) => r.conversation === b.conversation && r.turn === b.turn);
      if (!a) continue;
      const lost = b.segments.filter((sb) => sb.kind === 'passage' && sb.fate === 'dropped' && a.segments.some((sa) => sa.id === sb.id && sa.fate !== 'dropped'));
      lostByTurn.set(`${b.conversation} · turn ${b.turn}`, new Set(lost.map((x) => x.id)));
    }
    const expectedLost = [...lostByTurn.values()].reduce((n, set) => n + set.size, 0);
    assert(expectedLost > 0, `halving the budget to ${budget} lost no passage by the CLI's account; the scenario needs a smaller budget`);

    const frame = await findWebviewFrame(ctx.page, '[data-view="compare"] .compare-table', 60_000);
    const table = frame.locator('[data-view="compare"] .compare-table');
    if (!(await table.isVisible().catch(() => false))) {
      // The panel may stay on its current tab after a re-pack: the user opens the Compare tab.
      await showPanel(ctx, /^\s*compare\s*$/i);
    }
    await table.locator('.diff-lost').first().waitFor({ timeout: 30_000 });
    const rows = await table.locator('tbody tr').evaluateAll((trs) =>
      trs.map((tr) => ({ text: (tr as HTMLElement).innerText.replace(/\s+/g, ' '), lost: tr.querySelector('.diff-lost')?.textContent ?? '' })),
    );
    let shownLost = 0;
    for (const r of rows.filter((x) => x.lost)) {
      const key = [...lostByTurn.keys()].find((k) => new RegExp(`${k.replace(/[.*+?^${}()|[\]\\]/g, '\\$&')}(?!\\d)`).test(r.text));
      assert(key, `comparison row "${r.text.slice(0, 120)}" names no turn of the log`);
      const m = /(\d[\d,]*) lost: (.*)$/.exec(r.lost.replace(/^\W+/, ''));
      assert(m, `comparison row "${r.lost}" does not say how many passages were lost`);
      const n = Number(m[1]!.replace(/,/g, ''));
      const want = lostByTurn.get(key)!;
      assert(n === want.size, `${key}: panel says ${n} lost, the audits say ${want.size} (${[...want].join(', ')})`);
      const named = m[2]!.split(/[,\s]+/).map((x) => x.trim()).filter((x) => /^[\w.-]+$/.test(x));
      assert(named.length > 0, `${key}: "${r.lost}" names no passage`);
      for (const id of named) assert(want.has(id), `${key}: panel names ${id} as lost; the audits do not`);
      shownLost += n;
    }
    assert(shownLost > 0, 'the comparison lists no lost passage');
    ctx.log(`new file ${created[0]}; source sha256 unchanged; comparison lists ${shownLost} lost passages (audits: ${expectedLost} over ${after.records.length} turns)`);
    await hideBottomPanel(ctx.page);
    await setSidebarWidth(ctx.page, 820);
    await ctx.setTheme('Default Dark Modern');
    await ctx.screenshot('s4-compare-dark');
    await ctx.setTheme('Default Light Modern');
    await ctx.screenshot('s4-compare-light');
    await ctx.setTheme('Default Dark Modern');
  },
};
