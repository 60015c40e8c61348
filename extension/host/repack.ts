/**
 * "Re-pack Log Under a New Budget…" and "Sweep Budgets and Plans…": the VS Code end of the core's
 * re-pack, comparison and sweep (extension/core/repack). The re-pack streams the source (never
 * opened for writing) into a temp file beside it, renamed into place only when complete; a
 * cancelled or failed run deletes the temp file. The comparison and sweep results are kept here
 * and answer the panel's requests.
 */
import * as vscode from 'vscode';
import { open as openFile, type FileHandle } from 'node:fs/promises';
import { randomBytes } from 'node:crypto';
import { ComparisonCollector, comparisonTurnView, describeRepack, RepackTracker, type ComparisonStore } from '../core/view/comparison';
import { toTurnDetail } from '../core/view/viewModels';
import { budgetPrompt, parseTokenInput, parseTokenList, repackOutputName, validateBudgetInput } from '../core/view/repackForm';
import type { ComparisonSummary, HostMessage, SweepView, WebviewMessage } from '../protocol/messages';
import type { Prices } from '../core/repack/types';
import type { ActiveLog } from './activeLog';
import { loadEngine, sharedAccountant } from './core';
import { readChunks } from './fileIO';
import { output } from './output';
import type { PanelProvider } from './panel';
import type { LogSessions } from './sessions';

export const REPACK_COMMANDS = { repack: 'spillway.repackLog', sweep: 'spillway.sweepLog' } as const;

export const PRIVACY_NOTE = 'The new log holds the same personal data as the source.';

type ComparisonRequest = Extract<WebviewMessage, { type: 'requestComparisonPage' | 'requestComparisonTurn' }>;

interface HeldComparison {
  summary: ComparisonSummary;
  store: ComparisonStore;
  source: vscode.Uri;
  target: vscode.Uri;
}

/** The last comparison and sweep; the panel posts what they publish and routes requests here. */
export class RepackResults implements vscode.Disposable {
  private comparison: HeldComparison | undefined;
  private sweep: SweepView | undefined;
  private generation = 0;
  /** Results not yet shown by a ready panel: the next announcement switches the panel to them. */
  private readonly revealPending = new Set<'comparisonReady' | 'sweepReady'>();
  private readonly emitter = new vscode.EventEmitter<HostMessage>();
  readonly onDidPublish = this.emitter.event;

  nextGeneration(): number {
    return ++this.generation;
  }

  setComparison(c: HeldComparison): void {
    this.comparison = c;
    this.revealPending.add('comparisonReady');
    this.emitter.fire({ type: 'comparisonReady', summary: c.summary, reveal: true });
  }

  setSweep(s: SweepView): void {
    this.sweep = s;
    this.revealPending.add('sweepReady');
    this.emitter.fire({ type: 'sweepReady', sweep: s, reveal: true });
  }

  /** The panel posted a published message to a ready webview. */
  delivered(type: HostMessage['type']): void {
    if (type === 'comparisonReady' || type === 'sweepReady') this.revealPending.delete(type);
  }

  /**
   * What a freshly loaded webview is told: switched to a result only when that result was never
   * shown (it finished while the panel was closed); a reload otherwise keeps the user's view.
   */
  announcements(): HostMessage[] {
    const out: HostMessage[] = [];
    if (this.comparison) out.push({ type: 'comparisonReady', summary: this.comparison.summary, reveal: this.revealPending.has('comparisonReady') });
    if (this.sweep) out.push({ type: 'sweepReady', sweep: this.sweep, reveal: this.revealPending.has('sweepReady') });
    this.revealPending.clear();
    return out;
  }

  async answer(m: ComparisonRequest): Promise<HostMessage> {
    const c = this.comparison;
    if (!c) return { type: 'error', requestId: m.requestId, message: 'No re-pack comparison yet: run “Spillway: Re-pack Log Under a New Budget…”.' };
    if (m.type === 'requestComparisonPage') return { type: 'comparisonPage', requestId: m.requestId, generation: c.summary.generation, ...c.store.page(m.offset, m.limit) };
    const stored = c.store.at(m.line);
    if (!stored) return { type: 'error', requestId: m.requestId, message: `Line ${m.line} is not in the comparison list.` };
    const [a, b] = await Promise.all([detailAt(c.source, stored.loc.offsetA, stored.row.line), detailAt(c.target, stored.loc.offsetB, stored.row.lineB)]);
    return { type: 'comparisonTurn', requestId: m.requestId, view: comparisonTurnView(c.summary.generation, stored.row, a, b) };
  }

  dispose(): void {
    this.emitter.dispose();
  }
}

/** The record on the line starting at byte `offset`, audited with its own decisions, as a TurnDetail. */
async function detailAt(uri: vscode.Uri, offset: number, line: number): Promise<ReturnType<typeof toTurnDetail>> {
  const text = await readLineAt(uri, offset);
  const { parseRecordLine, auditRecord } = loadEngine();
  const parsed = parseRecordLine(text, line);
  if ('issue' in parsed) throw new Error(`${vscode.workspace.asRelativePath(uri, false)} line ${line}: ${parsed.issue.message} (was the file changed after the re-pack?)`);
  const located = { line, offset, record: parsed.record };
  const ledger = await auditRecord(located, {}, await sharedAccountant());
  return toTurnDetail({ record: parsed.record, ledger });
}

const MAX_LINE_READ = 256 * 1024 * 1024;

/** One line of a file from byte `offset` to the next newline (no trailing CR). */
export async function readLineAt(uri: vscode.Uri, offset: number): Promise<string> {
  let bytes: Uint8Array;
  if (uri.scheme === 'file') {
    const fh = await openFile(uri.fsPath, 'r');
    try {
      const parts: Buffer[] = [];
      let at = offset;
      let total = 0;
      for (;;) {
        const buf = Buffer.alloc(64 * 1024);
        const { bytesRead } = await fh.read(buf, 0, buf.length, at);
        if (bytesRead === 0) break;
        const nl = buf.subarray(0, bytesRead).indexOf(10);
        parts.push(buf.subarray(0, nl < 0 ? bytesRead : nl));
        total += nl < 0 ? bytesRead : nl;
        if (nl >= 0 || total > MAX_LINE_READ) break;
        at += bytesRead;
      }
      bytes = Buffer.concat(parts);
    } finally {
      await fh.close();
    }
  } else {
    const all = await vscode.workspace.fs.readFile(uri);
    const nl = all.indexOf(10, offset);
    bytes = all.subarray(offset, nl < 0 ? all.length : nl);
  }
  const s = Buffer.from(bytes.buffer, bytes.byteOffset, bytes.byteLength).toString('utf8');
  return s.endsWith('\r') ? s.slice(0, -1) : s;
}

/**
 * A new file written beside its target: a temp file in the same folder, renamed into place on
 * `commit`. Local files stream to disk in ~1 MiB writes (bounded memory); other schemes are
 * buffered and written through `vscode.workspace.fs`.
 */
export class AtomicOutput {
  private pending: string[] = [];
  private pendingBytes = 0;
  private held: Buffer[] = [];
  private done = false;

  private constructor(
    readonly target: vscode.Uri,
    readonly temp: vscode.Uri,
    private readonly fh: FileHandle | undefined,
  ) {}

  static async create(target: vscode.Uri): Promise<AtomicOutput> {
    const base = target.path.split('/').pop() ?? 'out';
    const temp = vscode.Uri.joinPath(target, '..', `.${base}.${randomBytes(6).toString('hex')}.tmp`);
    const fh = target.scheme === 'file' ? await openFile(temp.fsPath, 'wx') : undefined;
    return new AtomicOutput(target, temp, fh);
  }

  write(line: string): Promise<void> | void {
    this.pending.push(line);
    this.pendingBytes += line.length;
    if (this.pendingBytes >= 1 << 20) return this.flush();
  }

  private async flush(): Promise<void> {
    if (this.pending.length === 0) return;
    const buf = Buffer.from(this.pending.join(''), 'utf8');
    this.pending = [];
    this.pendingBytes = 0;
    if (this.fh) await this.fh.write(buf);
    else this.held.push(buf);
  }

  async commit(overwrite: boolean): Promise<void> {
    await this.flush();
    if (this.fh) await this.fh.close();
    else await vscode.workspace.fs.writeFile(this.temp, Buffer.concat(this.held));
    this.held = [];
    this.done = true;
    try {
      await vscode.workspace.fs.rename(this.temp, this.target, { overwrite });
    } catch (e) {
      await this.abort();
      throw e;
    }
  }

  /** Deletes the temp file (cancelled or failed run); the target is untouched. */
  async abort(): Promise<void> {
    this.pending = [];
    this.held = [];
    if (this.fh && !this.done) {
      this.done = true;
      await this.fh.close().catch(() => undefined);
    }
    await vscode.workspace.fs.delete(this.temp, { useTrash: false }).then(undefined, () => undefined);
  }
}

async function exists(uri: vscode.Uri): Promise<boolean> {
  try {
    await vscode.workspace.fs.stat(uri);
    return true;
  } catch {
    return false;
  }
}

async function sizeOf(uri: vscode.Uri): Promise<number> {
  try {
    return (await vscode.workspace.fs.stat(uri)).size;
  } catch {
    return 0;
  }
}

const nf = new Intl.NumberFormat('en-US');
const pct = (x: number | null | undefined): string => (x === null || x === undefined ? '–' : `${(Math.round(x * 1000) / 10).toFixed(1)}%`);

/** The log to work on: the explorer/editor argument, else the active log. Chat/OTLP logs must be converted first. */
function sourceOf(arg: unknown, active: ActiveLog, sessions: LogSessions): { uri: vscode.Uri; first?: { window: number; reserve: number; budget: number }; dirty: boolean } | undefined {
  const uri = arg instanceof vscode.Uri ? arg : active.session?.doc.uri;
  if (!uri) {
    void vscode.window.showInformationMessage('Spillway: open a Spillway log (.jsonl) in the editor first.');
    return undefined;
  }
  const s = sessions.get(uri);
  if (s && s.format !== 'spillway') {
    void vscode.window.showWarningMessage(`Spillway: ${s.file} is a ${s.format} log; convert it to a Spillway log first (spillway convert).`);
    return undefined;
  }
  const l = s?.log?.records[0]?.ledger;
  return { uri, first: l ? { window: l.window, reserve: l.reserve, budget: l.budget } : undefined, dirty: Boolean(s?.doc.isDirty) };
}

interface PlanPick extends vscode.QuickPickItem {
  plan: string | undefined | null;
}

async function pickPlan(): Promise<string | undefined | null> {
  const { PLAN_CHOICES, parsePlan } = loadEngine();
  const items: PlanPick[] = [
    { label: 'Each record’s own plan', description: 'keep', detail: 'the plan each record names (recent-first when it names none)', plan: undefined },
    ...PLAN_CHOICES.map((c) => ({ label: c.plan, detail: c.detail, plan: c.plan })),
    { label: 'Custom…', detail: 'type a plan spec, e.g. split:70+cap:300+order:edges', plan: null },
  ];
  const pick = await vscode.window.showQuickPick(items, { title: 'Spillway: re-pack — packing plan (1/3)', placeHolder: 'Packing plan for the new log', matchOnDetail: true });
  if (!pick) return null;
  if (pick.plan !== null) return pick.plan;
  const typed = await vscode.window.showInputBox({
    title: 'Spillway: re-pack — custom packing plan',
    prompt: 'A plan spec: recent-first, evidence-first, split:P, best-value, fusion:L, with +cap:N, +dedupe:R, +order:edges, +cut:sentence, +top:K',
    validateInput: (v) => {
      try {
        parsePlan(v.trim());
        return undefined;
      } catch (e) {
        return e instanceof Error ? e.message : String(e);
      }
    },
  });
  return typed === undefined ? null : typed.trim();
}

async function pickEncoding(): Promise<string | undefined | null> {
  const { ENCODINGS } = loadEngine();
  const pick = await vscode.window.showQuickPick(
    [{ label: 'Each record’s own encoding', description: 'keep', value: undefined as string | undefined }, ...ENCODINGS.map((e) => ({ label: e, description: '', value: e as string | undefined }))],
    { title: 'Spillway: re-pack — tokenizer encoding (2/3)', placeHolder: 'Encoding for the new log' },
  );
  return pick ? pick.value : null;
}

/** The whole re-pack flow; returns the new log's URI, or undefined when the user stopped. */
export async function repackLog(arg: unknown, active: ActiveLog, sessions: LogSessions, panel: PanelProvider, results: RepackResults): Promise<vscode.Uri | undefined> {
  const src = sourceOf(arg, active, sessions);
  if (!src) return undefined;
  const plan = await pickPlan();
  if (plan === null) return undefined;
  const encoding = await pickEncoding();
  if (encoding === null) return undefined;
  const typed = await vscode.window.showInputBox({
    title: 'Spillway: re-pack — new budget in tokens (3/3)',
    prompt: budgetPrompt(src.first),
    placeHolder: 'e.g. 4096 or 4k',
    validateInput: validateBudgetInput,
  });
  if (typed === undefined) return undefined;
  const budget = parseTokenInput(typed)!;
  const base = src.uri.path.split('/').pop() ?? 'log.jsonl';
  const target = vscode.Uri.joinPath(src.uri, '..', repackOutputName(base, { plan, budget, encoding }));
  if (target.toString() === src.uri.toString()) {
    void vscode.window.showErrorMessage('Spillway: the re-packed log would replace the source; refused.');
    return undefined;
  }
  if (src.dirty) {
    const go = await vscode.window.showWarningMessage('The log has unsaved changes; the re-pack reads the saved file.', { modal: true }, 'Re-pack the Saved File');
    if (!go) return undefined;
  }
  let overwrite = false;
  if (await exists(target)) {
    const ok = await vscode.window.showWarningMessage(`${vscode.workspace.asRelativePath(target, false)} already exists. Replace it?`, { modal: true }, 'Replace');
    if (ok !== 'Replace') return undefined;
    overwrite = true;
  }

  const engine = loadEngine();
  const options = { budget, ...(plan ? { plan } : {}), ...(encoding ? { encoding } : {}) };
  if (plan) engine.parsePlan(plan); // throws with the valid list before any work
  const prices = readPrices();
  const size = await sizeOf(src.uri);
  const t0 = performance.now();
  const generation = results.nextGeneration();
  const collector = new ComparisonCollector(new engine.ComparisonTotalsBuilder(prices));
  let out: AtomicOutput;
  try {
    out = await AtomicOutput.create(target);
  } catch (e) {
    void vscode.window.showErrorMessage(`Spillway: cannot write beside the log: ${e instanceof Error ? e.message : String(e)}`);
    return undefined;
  }
  const ac = new AbortController();
  const name = vscode.workspace.asRelativePath(src.uri, false);
  let summary;
  try {
    summary = await vscode.window.withProgress(
      { location: vscode.ProgressLocation.Notification, title: `Spillway: re-packing ${name}`, cancellable: true },
      async (progress, token) => {
        const sub = token.onCancellationRequested(() => ac.abort());
        try {
          let reported = 0;
          // Remembers where each record starts in both files, for the side-by-side view later.
          const tracker = new RepackTracker(collector);
          return await engine.repackLines(tracker.items(engine.readLogForRepack(readChunks(src.uri))), options, {
            accountant: await sharedAccountant(),
            signal: ac.signal,
            write: (line) => {
              tracker.wrote(line);
              return out.write(line);
            },
            onComparison: tracker.onComparison,
            onProgress: (done, bytes) => {
              const pctDone = bytes !== undefined && size > 0 ? (100 * bytes) / size : undefined;
              const inc = pctDone !== undefined ? Math.max(0, pctDone - reported) : undefined;
              if (pctDone !== undefined) reported = pctDone;
              progress.report({ message: `${nf.format(done)} records`, ...(inc !== undefined ? { increment: inc } : {}) });
            },
          });
        } finally {
          sub.dispose();
        }
      },
    );
    // A cancel that arrives after the core's last check still means "do not write".
    if (ac.signal.aborted) throw new engine.RepackCancelled();
    await out.commit(overwrite);
  } catch (e) {
    await out.abort();
    if (e instanceof engine.RepackCancelled) {
      void vscode.window.showInformationMessage('Spillway: re-pack cancelled; no file was written.');
      return undefined;
    }
    output().error(`Re-pack of ${name} failed: ${e instanceof Error ? (e.stack ?? e.message) : String(e)}`);
    void vscode.window.showErrorMessage(`Spillway: the re-pack failed: ${e instanceof Error ? e.message : String(e)}`);
    return undefined;
  }
  const seconds = (performance.now() - t0) / 1000;
  const store = collector.finish();
  const t = store.totals;
  const targetName = vscode.workspace.asRelativePath(target, false);
  results.setComparison({
    source: src.uri,
    target,
    store,
    summary: {
      generation,
      source: name,
      target: targetName,
      options: describeRepack(options),
      totals: t,
      rows: store.rows.length,
      omitted: store.omitted,
      malformed: summary.malformed,
      copiedVerbatim: summary.copiedVerbatim,
      seconds,
    },
  });
  output().info(`Re-packed ${name} → ${targetName}: ${summary.records} records in ${seconds.toFixed(1)} s; ${t.changed} changed, ${t.worse} worse, ${t.better} better`);
  for (const i of summary.issues.slice(0, 20)) output().warn(`${name}:${i.line}:${i.column} ${i.code}: ${i.message}`);
  await panel.show();
  const text =
    `Spillway: re-packed ${nf.format(t.turns)} turns into ${targetName} — ${nf.format(t.changed)} changed, ${nf.format(t.worse)} worse, ${nf.format(t.better)} better; ` +
    `evidence retention ${pct(t.evidenceRetentionA)} → ${pct(t.evidenceRetentionB)}` +
    (summary.malformed ? `; ${nf.format(summary.malformed)} malformed line(s) copied as they were` : '') +
    `. ${PRIVACY_NOTE}`;
  void vscode.window.showInformationMessage(text, 'Open Re-packed Log').then((choice) => {
    if (choice) void vscode.window.showTextDocument(target, { preview: false });
  });
  return target;
}

/** `spillway.prices` ("gpt-4o-mini=0.15,*=1", per million input tokens); undefined when unset or invalid (reported). */
export function readPrices(): Prices | undefined {
  const raw = vscode.workspace.getConfiguration('spillway').get<string>('prices');
  if (!raw || !raw.trim()) return undefined;
  try {
    return loadEngine().parsePrices(raw);
  } catch (e) {
    void vscode.window.showWarningMessage(`Spillway: the spillway.prices setting is ignored: ${e instanceof Error ? e.message : String(e)}`);
    return undefined;
  }
}

/** The sweep flow: budgets, plans (multi-select), optional k list → `sweep` with progress → the panel chart. */
export async function sweepLog(arg: unknown, active: ActiveLog, sessions: LogSessions, panel: PanelProvider, results: RepackResults): Promise<SweepView | undefined> {
  const src = sourceOf(arg, active, sessions);
  if (!src) return undefined;
  const budgetsText = await vscode.window.showInputBox({
    title: 'Spillway: sweep — budgets (1/3)',
    prompt: `Budgets in tokens, comma-separated (k = 1,024). ${budgetPrompt(src.first).split('. ')[0] ?? ''}`,
    value: '4k,8k,16k,32k',
    validateInput: (v) => {
      const r = parseTokenList(v, 'budget');
      return r.ok ? undefined : r.error;
    },
  });
  if (budgetsText === undefined) return undefined;
  const budgets = (parseTokenList(budgetsText, 'budget') as { values: number[] }).values;
  const engine = loadEngine();
  const picks = await vscode.window.showQuickPick(
    engine.PLAN_CHOICES.map((c, i) => ({ label: c.plan, detail: c.detail, picked: i < 2 })),
    { title: 'Spillway: sweep — packing plans (2/3)', placeHolder: 'Plans to compare', canPickMany: true, matchOnDetail: true },
  );
  if (!picks || picks.length === 0) return undefined;
  const plans = picks.map((p) => p.label);
  const kText = await vscode.window.showInputBox({
    title: 'Spillway: sweep — passage counts k (3/3, optional)',
    prompt: 'Each plan also runs with only the k best-ranked passages as candidates, for each k (e.g. 3,5,10). Empty: all passages.',
    validateInput: (v) => {
      if (v.trim() === '') return undefined;
      const r = parseTokenList(v, 'passage count');
      return r.ok ? undefined : r.error;
    },
  });
  if (kText === undefined) return undefined;
  const ks = kText.trim() === '' ? undefined : (parseTokenList(kText, 'passage count') as { values: number[] }).values;
  const prices = readPrices();
  const size = await sizeOf(src.uri);
  const name = vscode.workspace.asRelativePath(src.uri, false);
  const ac = new AbortController();
  const t0 = performance.now();
  const options = budgets.length * plans.length * (ks?.length ?? 1);
  let r;
  try {
    r = await vscode.window.withProgress(
      { location: vscode.ProgressLocation.Notification, title: `Spillway: sweeping ${name} over ${options} options`, cancellable: true },
      async (progress, token) => {
        const sub = token.onCancellationRequested(() => ac.abort());
        let reported = 0;
        try {
          return await engine.sweep(engine.readLog(readChunks(src.uri)), { budgets, plans, ...(ks ? { ks } : {}), ...(prices ? { prices } : {}) }, {
            accountant: await sharedAccountant(),
            signal: ac.signal,
            onProgress: (done, bytes) => {
              const p = bytes !== undefined && size > 0 ? (100 * bytes) / size : undefined;
              progress.report({ message: `${nf.format(done)} records`, ...(p !== undefined ? { increment: Math.max(0, p - reported) } : {}) });
              if (p !== undefined) reported = p;
            },
          });
        } finally {
          sub.dispose();
        }
      },
    );
  } catch (e) {
    if (e instanceof engine.SweepCancelled) {
      void vscode.window.showInformationMessage('Spillway: sweep cancelled.');
      return undefined;
    }
    void vscode.window.showErrorMessage(`Spillway: the sweep failed: ${e instanceof Error ? e.message : String(e)}`);
    return undefined;
  }
  const view: SweepView = { file: name, records: r.records, malformed: r.malformed, budgets, plans, ks: ks ?? [null], cells: r.cells, priced: Boolean(prices), seconds: (performance.now() - t0) / 1000 };
  results.setSweep(view);
  output().info(`Swept ${name}: ${r.records} records × ${options} options in ${view.seconds.toFixed(1)} s`);
  await panel.show();
  return view;
}

export function registerRepackCommands(sessions: LogSessions, active: ActiveLog, panel: PanelProvider, results: RepackResults): vscode.Disposable[] {
  return [
    vscode.commands.registerCommand(REPACK_COMMANDS.repack, (arg?: unknown) => repackLog(arg, active, sessions, panel, results)),
    vscode.commands.registerCommand(REPACK_COMMANDS.sweep, (arg?: unknown) => sweepLog(arg, active, sessions, panel, results)),
  ];
}
