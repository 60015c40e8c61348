/**
 * Playwright helpers that act the way a user does in the VS Code workbench: the command
 * palette (F1), Quick Open, the Problems view, and the content of webviews (which VS Code
 * nests two iframes deep: `iframe.webview.ready` > `iframe#active-frame`).
 */
import type { Frame, Locator, Page } from 'playwright-core';

export const sleep = (ms: number) => new Promise((r) => setTimeout(r, ms));

export async function waitForWorkbench(page: Page, timeout = 90_000): Promise<void> {
  await page.locator('.monaco-workbench').waitFor({ state: 'visible', timeout });
  await page.locator('#workbench\\.parts\\.statusbar').waitFor({ state: 'visible', timeout });
}

const quickInput = (page: Page) => page.locator('.quick-input-widget');
const quickInputBox = (page: Page) => page.locator('.quick-input-widget input.input').first();
const rows = (page: Page) => page.locator('.quick-input-widget .quick-input-list .monaco-list-row');

async function openPalette(page: Page, text: string): Promise<void> {
  if (await quickInput(page).isVisible()) await page.keyboard.press('Escape');
  await page.locator('.monaco-workbench').click({ position: { x: 5, y: 300 }, trial: true }).catch(() => undefined);
  await page.keyboard.press('F1');
  await quickInputBox(page).waitFor({ state: 'visible', timeout: 10_000 });
  await quickInputBox(page).fill(text);
}

/** Labels of the palette entries whose title matches `filter` (e.g. "Spillway:"). */
export async function paletteEntries(page: Page, filter: string): Promise<string[]> {
  await openPalette(page, `>${filter}`);
  await sleep(600);
  const labels = (await rows(page).allInnerTexts()).map((t) => t.split('\n')[0]!.trim());
  await page.keyboard.press('Escape');
  return labels;
}

/**
 * Run a command by its palette title ("Category: Title"). Retries until `timeout` while the
 * extension host is still registering commands. Returns false if the title never appeared.
 */
export async function runCommand(page: Page, title: string, opts: { timeout?: number; mustExist?: boolean } = {}): Promise<boolean> {
  const deadline = Date.now() + (opts.timeout ?? 30_000);
  for (;;) {
    await openPalette(page, `>${title}`);
    const row = rows(page).filter({ has: page.locator('.label-name', { hasText: exactText(title) }) }).first();
    try {
      await row.waitFor({ state: 'visible', timeout: 3000 });
      await row.click();
      await paletteGone(page);
      return true;
    } catch {
      await page.keyboard.press('Escape');
      if (Date.now() > deadline) {
        if (opts.mustExist === false) return false;
        throw new Error(`command "${title}" not found in the palette`);
      }
      await sleep(1000);
    }
  }
}

/**
 * Waits until the command palette has closed or a command's own prompt has replaced it, so a caller
 * never answers (or types into) the palette itself — a key pressed too early lands in the editor.
 */
async function paletteGone(page: Page, timeout = 10_000): Promise<void> {
  await page
    .waitForFunction(
      () => {
        const w = document.querySelector<HTMLElement>('.quick-input-widget');
        if (!w || getComputedStyle(w).display === 'none') return true;
        const input = w.querySelector<HTMLInputElement>('input.input');
        return !input || !input.value.startsWith('>');
      },
      undefined,
      { timeout },
    )
    .catch(() => undefined);
}

function exactText(s: string): RegExp {
  return new RegExp(`^\\s*${s.replace(/[.*+?^${}()|[\]\\]/g, '\\$&')}\\s*$`);
}

/**
 * Open a workspace file through Quick Open, as a user would, and wait for its editor. The first
 * file search of a session can be slow (the search service starts on demand), so it retries.
 */
export async function openFile(page: Page, relPath: string, timeout = 60_000): Promise<void> {
  const name = relPath.split('/').pop()!;
  const deadline = Date.now() + timeout;
  for (;;) {
    await openPalette(page, relPath);
    // The exact file name: a re-packed sibling (fares-and-passes.repacked-….jsonl) also matches the query.
    const row = rows(page).filter({ has: page.locator('.label-name', { hasText: exactText(name) }) }).first();
    try {
      await row.waitFor({ state: 'visible', timeout: 10_000 });
      await row.click();
      break;
    } catch (e) {
      await page.keyboard.press('Escape');
      if (Date.now() > deadline) throw new Error(`Quick Open did not find ${relPath} within ${timeout / 1000} s: ${String(e)}`);
    }
  }
  await page.locator(`.tabs-container .tab[aria-label^="${name}"]`).first().waitFor({ timeout: 20_000 });
  await page.locator('.editor-group-container.active .monaco-editor .view-lines').first().waitFor({ timeout: 20_000 });
}

/** Put the cursor on a 1-based line of the active editor (Go to Line). */
export async function goToLine(page: Page, line: number): Promise<void> {
  await openPalette(page, `:${line}`);
  await sleep(300);
  await page.keyboard.press('Enter');
  await sleep(300);
}

/**
 * The webview inner frame whose document contains `selector`, waiting up to `timeout`.
 * Frame objects change on reload, so callers ask again after navigation.
 */
export async function findWebviewFrame(page: Page, selector: string, timeout = 30_000): Promise<Frame> {
  const deadline = Date.now() + timeout;
  for (;;) {
    for (const f of page.frames()) {
      if (f === page.mainFrame() || f.isDetached()) continue;
      try {
        if ((await f.locator(selector).count()) > 0) return f;
      } catch {
        /* frame navigating */
      }
    }
    if (Date.now() > deadline) throw new Error(`no webview frame with ${selector} within ${timeout} ms`);
    await sleep(300);
  }
}

export async function textOf(loc: Locator): Promise<string> {
  return ((await loc.textContent()) ?? '').replace(/\s+/g, ' ').trim();
}

/** Visible notification toasts' texts. */
export async function toasts(page: Page): Promise<string[]> {
  return (await page.locator('.notifications-toasts .notification-toast').allInnerTexts()).map((t) => t.replace(/\s+/g, ' ').trim());
}

/** CodeLens entries of the active editor, each mapped to the 1-based line it sits above. */
export async function codeLenses(page: Page): Promise<Array<{ line: number; text: string }>> {
  return await page.evaluate(() => {
    const editor = document.querySelector('.editor-group-container.active .monaco-editor') ?? document.querySelector('.monaco-editor');
    if (!editor) return [];
    const numbers = [...editor.querySelectorAll('.margin-view-overlays .line-numbers')].map((el) => ({
      line: Number((el.textContent ?? '').trim()),
      top: el.getBoundingClientRect().top,
    }));
    const out: Array<{ line: number; text: string }> = [];
    for (const lens of editor.querySelectorAll('.codelens-decoration')) {
      const r = lens.getBoundingClientRect();
      if (r.height === 0) continue;
      // The lens sits in a view zone right above its line: the first line number below it.
      let best: { line: number; top: number } | undefined;
      for (const n of numbers) if (n.top >= r.bottom - 2 && (!best || n.top < best.top)) best = n;
      if (best && Number.isFinite(best.line)) out.push({ line: best.line, text: (lens.textContent ?? '').replace(/\s+/g, ' ').trim() });
    }
    return out.sort((a, b) => a.line - b.line);
  });
}

/** Scroll the active editor so that `line` is at the top (keyboard: Go to Line, then reveal at top). */
export async function scrollEditorTo(page: Page, line: number): Promise<void> {
  await goToLine(page, line);
}

/** Hide the bottom panel (Problems, Output…) so screenshots show the editor and the sidebar. */
export async function hideBottomPanel(page: Page): Promise<void> {
  if (await page.locator('.part.panel.bottom').isVisible().catch(() => false)) {
    await runCommand(page, 'View: Hide Panel', { timeout: 10_000, mustExist: false });
    await sleep(300);
  }
}

/** Drag the sash right of the primary side bar so it is `width` pixels wide. */
export async function setSidebarWidth(page: Page, width: number): Promise<void> {
  const bar = await page.locator('.part.sidebar').boundingBox();
  if (!bar) return;
  const edge = bar.x + bar.width;
  const sashes = page.locator('.monaco-sash.vertical');
  for (let i = 0; i < (await sashes.count()); i++) {
    const b = await sashes.nth(i).boundingBox();
    if (!b || Math.abs(b.x + b.width / 2 - edge) > 6 || b.height < bar.height / 2) continue;
    const y = b.y + b.height / 2;
    await page.mouse.move(b.x + b.width / 2, y);
    await page.mouse.down();
    await page.mouse.move(bar.x + width, y, { steps: 8 });
    await page.mouse.up();
    await sleep(400);
    return;
  }
}
