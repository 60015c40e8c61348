/** Scenario 0: the packaged extension is installed, activates, and its commands are in the palette. */
import { readFile, readdir } from 'node:fs/promises';
import { join } from 'node:path';
import type { Ctx } from '../context';
import { EXTENSION_ID, extensionHostLogs } from '../logs';
import { openFile, paletteEntries, sleep } from '../workbench';
import { assert } from '../assert';

export const SAMPLE_LOG = 'logs/fares-and-passes.jsonl';

async function activationLine(ctx: Ctx): Promise<string | undefined> {
  for (const f of await extensionHostLogs(ctx.server.userDataDir)) {
    const text = await readFile(f, 'utf8');
    const failed = text.split('\n').find((l) => l.includes(`Activating extension ${EXTENSION_ID} failed`) || l.includes(`Activating extension '${EXTENSION_ID}' failed`));
    if (failed) throw new Error(`activation failed: ${failed}`);
    const line = text.split('\n').find((l) => l.includes(`_doActivateExtension ${EXTENSION_ID}`));
    if (line) return line;
  }
  return undefined;
}

export const smoke = {
  id: '0-smoke',
  title: 'extension installed and activated; "Spillway:" commands in the palette',
  async run(ctx: Ctx): Promise<void> {
    const expected = ctx.commands.filter((c) => c.palette.startsWith('Spillway:') && !c.hidden);
    assert(expected.length > 0, 'the installed manifest contributes no command in category "Spillway"');
    // Opening a log is the user's way in, and the activation event for a lazily activated extension.
    const logs = await readdir(join(ctx.server.workspace, 'logs')).catch(() => [] as string[]);
    if (logs.includes(SAMPLE_LOG.split('/')[1]!)) await openFile(ctx.page, SAMPLE_LOG);
    let activated: string | undefined;
    for (const deadline = Date.now() + 45_000; Date.now() < deadline && !activated; ) {
      activated = await activationLine(ctx);
      if (!activated) await sleep(500);
    }
    assert(activated, `no "${EXTENSION_ID}" activation in the extension host log within 45 s`);
    ctx.log(activated.replace(/^.*_doActivateExtension /, 'activated: '));

    let shown: string[] = [];
    for (const deadline = Date.now() + 30_000; Date.now() < deadline; ) {
      shown = await paletteEntries(ctx.page, 'Spillway:');
      if (expected.every((c) => shown.includes(c.palette))) break;
      await sleep(1000);
    }
    const missing = expected.filter((c) => !shown.includes(c.palette)).map((c) => c.palette);
    assert(missing.length === 0, `palette lacks ${missing.join(', ')}; shows ${shown.join(' | ')}`);
    ctx.log(`palette lists ${shown.length} Spillway commands: ${shown.join(' | ')}`);
  },
};
