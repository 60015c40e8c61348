/**
 * The whole "Re-pack Log Under a New Budget…" flow against a stand-in `vscode` whose file system is
 * the real disk (a temp folder): the new log appears beside the source under its expected name, the
 * source stays byte-identical, an existing file is replaced only after the modal says so, and a
 * cancelled run leaves no file and no temp file behind. The engine is the TypeScript core itself
 * (extension/host/engine.ts) instead of the dist bundle.
 */
import { copyFileSync, mkdtempSync, readdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { rename as fsRename, rm as fsRm, stat as fsStat, writeFile as fsWriteFile, readFile as fsReadFile } from 'node:fs/promises';
import { tmpdir } from 'node:os';
import { join, posix } from 'node:path';
import { afterEach, beforeEach, describe, expect, it, vi } from 'vitest';

const ui = vi.hoisted(() => ({
  picks: [] as Array<(items: unknown[]) => unknown>,
  inputs: [] as string[],
  warnings: [] as Array<string | undefined>,
  infos: [] as string[],
  errors: [] as string[],
  cancelAfterFirstProgress: false,
  prices: undefined as string | undefined,
}));

vi.mock('vscode', () => {
  class Uri {
    constructor(
      readonly scheme: string,
      readonly path: string,
    ) {}
    get fsPath(): string {
      return this.path;
    }
    toString(): string {
      return `${this.scheme}://${this.path}`;
    }
    static file(p: string): Uri {
      return new Uri('file', p);
    }
    static joinPath(base: Uri, ...parts: string[]): Uri {
      return new Uri(base.scheme, posix.join(base.path, ...parts));
    }
  }
  class EventEmitter<T> {
    private ls: Array<(v: T) => void> = [];
    event = (l: (v: T) => void) => {
      this.ls.push(l);
      return { dispose: () => undefined };
    };
    fire(v: T): void {
      this.ls.forEach((l) => l(v));
    }
    dispose(): void {}
  }
  const window = {
    showQuickPick: async (items: unknown[]) => (ui.picks.shift() ?? ((xs: unknown[]) => xs[0]))(items),
    showInputBox: async (o: { validateInput?: (v: string) => string | undefined }) => {
      const v = ui.inputs.shift();
      if (v !== undefined && o.validateInput?.(v)) throw new Error(`input refused: ${o.validateInput(v)}`);
      return v;
    },
    showWarningMessage: async (msg: string) => {
      ui.infos.push(msg);
      return ui.warnings.shift();
    },
    showInformationMessage: async (msg: string) => {
      ui.infos.push(msg);
      return undefined;
    },
    showErrorMessage: async (msg: string) => {
      ui.errors.push(msg);
      return undefined;
    },
    withProgress: async (_o: unknown, task: (p: { report(x: unknown): void }, t: { onCancellationRequested(l: () => void): { dispose(): void } }) => Promise<unknown>) => {
      let cancel: (() => void) | undefined;
      const token = { onCancellationRequested: (l: () => void) => ((cancel = l), { dispose: () => undefined }) };
      return task({ report: () => (ui.cancelAfterFirstProgress ? cancel?.() : undefined) }, token);
    },
    showTextDocument: async () => undefined,
  };
  const workspace = {
    asRelativePath: (u: Uri | string) => posix.basename(typeof u === 'string' ? u : u.path),
    getConfiguration: () => ({ get: (k: string) => (k === 'prices' ? ui.prices : undefined) }),
    fs: {
      stat: async (u: Uri) => {
        const s = await fsStat(u.path);
        return { size: s.size };
      },
      rename: async (a: Uri, b: Uri, o: { overwrite: boolean }) => {
        if (!o.overwrite && (await fsStat(b.path).then(() => true, () => false))) throw new Error('exists');
        await fsRename(a.path, b.path);
      },
      delete: async (u: Uri) => fsRm(u.path),
      writeFile: async (u: Uri, b: Uint8Array) => fsWriteFile(u.path, b),
      readFile: async (u: Uri) => fsReadFile(u.path),
    },
  };
  return { Uri, EventEmitter, window, workspace, ProgressLocation: { Notification: 15 }, commands: { registerCommand: () => ({ dispose() {} }) } };
});

vi.mock('../../extension/host/core', async () => {
  const engine = await import('../../extension/host/engine');
  const acct = engine.Accountant.create();
  return { loadEngine: () => engine, sharedAccountant: () => acct };
});
vi.mock('../../extension/host/output', () => ({ output: () => ({ info() {}, warn() {}, error() {} }) }));

import * as vscode from 'vscode';
import { repackLog, RepackResults, sweepLog } from '../../extension/host/repack';
import type { HostMessage } from '../../extension/protocol/messages';

const SAMPLE = 'sample-workspace/logs/fares-and-passes.jsonl';
let dir: string;
let src: string;

beforeEach(() => {
  dir = mkdtempSync(join(tmpdir(), 'spillway-repack-'));
  src = join(dir, 'fares-and-passes.jsonl');
  copyFileSync(SAMPLE, src);
  Object.assign(ui, { picks: [], inputs: [], warnings: [], infos: [], errors: [], cancelAfterFirstProgress: false, prices: undefined });
});
afterEach(() => rmSync(dir, { recursive: true, force: true }));

function run(results = new RepackResults()) {
  const shown: unknown[] = [];
  const panel = { show: async () => void shown.push(1) } as never;
  const sessions = { get: () => undefined } as never;
  const active = { session: undefined } as never;
  return { results, shown, go: () => repackLog(vscode.Uri.file(src), active, sessions, panel, results) };
}

describe('repackLog (stand-in vscode, real disk, real core)', () => {
  it('writes <stem>.repacked-own-plan-512.jsonl beside the source, leaves the source byte-identical, publishes the comparison', async () => {
    const before = readFileSync(src);
    ui.inputs.push('512'); // plan and encoding: the first entries (each record's own)
    const r = run();
    const published: HostMessage[] = [];
    r.results.onDidPublish((m) => published.push(m));
    const out = await r.go();
    expect(out?.path).toBe(join(dir, 'fares-and-passes.repacked-own-plan-512.jsonl'));
    expect(readdirSync(dir).sort()).toEqual(['fares-and-passes.jsonl', 'fares-and-passes.repacked-own-plan-512.jsonl']);
    expect(readFileSync(src).equals(before)).toBe(true);
    const lines = readFileSync(out!.path, 'utf8').trim().split('\n').map((l) => JSON.parse(l));
    expect(lines).toHaveLength(6);
    for (const rec of lines) expect(rec.model.window - rec.model.reserve).toBe(512);
    expect(published).toMatchObject([{ type: 'comparisonReady', reveal: true, summary: { rows: 6, totals: { turns: 6, worse: 6 } } }]);
    expect(r.shown).toHaveLength(1);
    expect(ui.infos.at(-1)).toMatch(/6 changed, 6 worse, 0 better; evidence retention 81\.5% → 23\.5%\. The new log holds the same personal data as the source\.$/);
  });

  it('replaces an existing output only when the modal says Replace', async () => {
    const target = join(dir, 'fares-and-passes.repacked-own-plan-512.jsonl');
    writeFileSync(target, 'keep me\n');
    ui.inputs.push('512');
    ui.warnings.push(undefined); // the user closes the modal
    expect(await run().go()).toBeUndefined();
    expect(readFileSync(target, 'utf8')).toBe('keep me\n');
    ui.inputs.push('512');
    ui.warnings.push('Replace');
    expect(await run().go()).toBeDefined();
    expect(readFileSync(target, 'utf8').split('\n')).toHaveLength(7);
    expect(readdirSync(dir).filter((f) => f.endsWith('.tmp'))).toEqual([]);
  });

  /** Re-packs to 512, cancelling at the first progress report: nothing written, the source as it was. */
  async function cancelAtFirstProgress(before: Buffer): Promise<void> {
    ui.inputs.push('512');
    ui.cancelAfterFirstProgress = true;
    expect(await run().go()).toBeUndefined();
    expect(readdirSync(dir)).toEqual(['fares-and-passes.jsonl']);
    expect(readFileSync(src).equals(before)).toBe(true);
    expect(ui.infos.at(-1)).toBe('Spillway: re-pack cancelled; no file was written.');
  }

  it('cancelled (here at the last progress report, after the core’s last check): no output, no temp file, the source untouched', async () => {
    const before = readFileSync(src);
    await cancelAtFirstProgress(before);
  });

  it('cancelled mid-run (first progress report, after 1,000 of 1,500 generated records): no output, no temp file', async () => {
    const { generateLog } = await import('../../extension/core/sample/generator');
    writeFileSync(src, [...generateLog({ seed: 7, turns: 1500 })].join('\n') + '\n');
    const before = readFileSync(src);
    // more than 1,000 parseable lines, so the first progress report (every 1,000 records) comes mid-run
    const parseable = before.toString('utf8').split('\n').filter((l) => { try { JSON.parse(l); return true; } catch { return false; } }).length;
    expect(parseable).toBeGreaterThan(1000);
    await cancelAtFirstProgress(before);
  });

  it('a chosen plan and encoding name the file; a custom plan is validated by the core', async () => {
    ui.picks.push((xs) => (xs as Array<{ label: string }>).find((x) => x.label === 'Custom…'));
    ui.inputs.push('no-such-plan');
    await expect(run().go()).rejects.toThrow(/input refused: unknown packing plan "no-such-plan" \(valid: recent-first/);
    ui.picks.push((xs) => (xs as Array<{ label: string }>).find((x) => x.label === 'evidence-first'));
    ui.picks.push((xs) => (xs as Array<{ label: string }>).find((x) => x.label === 'cl100k_base'));
    ui.inputs.push('1k');
    const out = await run().go();
    expect(out?.path).toBe(join(dir, 'fares-and-passes.repacked-evidence-first-1024-cl100k_base.jsonl'));
    const rec = JSON.parse(readFileSync(out!.path, 'utf8').split('\n')[0]!);
    expect([rec.plan, rec.model.encoding, rec.model.window - rec.model.reserve]).toEqual(['evidence-first', 'cl100k_base', 1024]);
  });
});

describe('sweepLog (stand-in vscode, real core)', () => {
  it('sweeps budgets × the picked plans and publishes the chart data with cost per 1,000 turns', async () => {
    ui.inputs.push('1k, 512', ''); // budgets (sorted to 512, 1,024), no k axis
    ui.picks.push((xs) => (xs as Array<{ picked?: boolean }>).filter((x) => x.picked)); // the two pre-selected plans
    ui.prices = '*=1'; // 1 per million input tokens for every model
    const results = new RepackResults();
    const published: HostMessage[] = [];
    results.onDidPublish((m) => published.push(m));
    const view = await sweepLog(vscode.Uri.file(src), { session: undefined } as never, { get: () => undefined } as never, { show: async () => undefined } as never, results);
    expect(view).toMatchObject({ records: 6, budgets: [512, 1024], plans: ['recent-first', 'evidence-first'], ks: [null], priced: true });
    expect(view!.cells.map((c) => [c.budget, c.plan])).toEqual([
      [512, 'recent-first'],
      [512, 'evidence-first'],
      [1024, 'recent-first'],
      [1024, 'evidence-first'],
    ]);
    // `spillway sweep … --budgets 512,768,1k --plans recent-first,evidence-first` printed evidence kept
    // 23.5% / 47.8% at 512 and 81.5% / 100.0% at 1,024 (docs/repack-in-editor.md).
    expect(view!.cells.map((c) => (100 * c.evidenceRetention!).toFixed(1))).toEqual(['23.5', '47.8', '81.5', '100.0']);
    // recent-first at 1,024 spends what the log itself spent (5,578 tokens over 6 turns, `spillway compare`):
    // 5,578 × 1 / 10⁶ ÷ 6 × 1,000 = 0.92966…
    expect(view!.cells[2]!.tokens).toBe(5578);
    expect(view!.cells[2]!.costPer1000Turns).toBeCloseTo(5578 / 6000, 12);
    expect(published).toMatchObject([{ type: 'sweepReady', reveal: true }]);
  });

  it('refuses a bad budget list in the input box', async () => {
    ui.inputs.push('4k,lots');
    await expect(sweepLog(vscode.Uri.file(src), { session: undefined } as never, { get: () => undefined } as never, { show: async () => undefined } as never, new RepackResults())).rejects.toThrow(
      'input refused: "lots" is not a whole number like 8192 or 8k.',
    );
  });
});
