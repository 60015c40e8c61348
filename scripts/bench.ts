/**
 * `npm run bench` (issue 8): does the audit scale? Generates logs with the project's generator at about
 * 10 MB, 100 MB and 1 GB (cached under bench/out/, keyed by seed and size), and prints ONE table measured
 * in the same run:
 *   floor  — read the file and JSON.parse every line (the least any audit must do), MB/s;
 *   naive  — gpt-tokenizer `countTokens` on every segment of every record, no memo, MB/s;
 *   audit  — `node dist/cli.js audit <log> --format json --out <tmp>` (the real CLI path), with and
 *            without the grounding analysis, MB/s, records/s, ratios to floor and naive;
 *   peak RSS of each (a separate process each, `/usr/bin/time` %M), and the time-vs-size exponent.
 * Then re-pack and a 4 × 4 sweep per 100k records, the memo hit rate, and the hostile-text table.
 *
 *   node dist/bench.js [--skip-1gb] [--seed 42] [--naive-seconds 60] [--no-hostile] [--skip-analysis-1gb]
 *
 * Every measurement runs in its own child process (this script re-runs itself with `--child <kind>`), so
 * RSS is per measurement and one measurement's heap does not slow the next. The load average is printed
 * beside every row: on a shared machine, read the ratios (measured minutes apart), not the absolute MB/s.
 */
import { spawn } from 'node:child_process';
import { copyFileSync, createReadStream, createWriteStream, existsSync, mkdirSync, readFileSync, renameSync, rmSync, statSync, writeFileSync } from 'node:fs';
import { availableParallelism, cpus, loadavg, totalmem, tmpdir } from 'node:os';
import { join, resolve } from 'node:path';
import { once } from 'node:events';
import { generateLog } from '../extension/core/sample/generator';
import { PARALLEL_MIN_BYTES } from '../extension/core/audit/parallel';

const MB = 1024 * 1024;
/** Worker threads of the parallel rows: what the CLI starts by default (one per core, at most 4). */
const WORKERS = Math.min(4, availableParallelism());
const ROOT = resolve(__dirname, '..');
let CLI = join(ROOT, 'dist', 'cli.js');

/** Copies the CLI bundle and its worker aside, so a rebuild of dist/ during the run cannot change what is measured. */
function snapshotCli(): void {
  const dir = join(tmpdir(), `spillway-bench-cli-${process.pid}`);
  mkdirSync(dir, { recursive: true });
  for (const f of ['cli.js', 'auditWorker.js']) if (existsSync(join(ROOT, 'dist', f))) copyFileSync(join(ROOT, 'dist', f), join(dir, f));
  CLI = join(dir, 'cli.js');
  process.on('exit', () => rmSync(dir, { recursive: true, force: true }));
}
const SELF = __filename;

interface Flags {
  skip1gb: boolean;
  skipAnalysis1gb: boolean;
  seed: number;
  naiveSeconds: number;
  hostile: boolean;
  sizes: number[];
  /** Runs of the floor and of the ledger audit per size (interleaved; the median is reported). */
  repeat: number;
}

function parseFlags(argv: string[]): Flags {
  const f: Flags = { skip1gb: false, skipAnalysis1gb: false, seed: 42, naiveSeconds: 60, hostile: true, sizes: [10, 100, 1024], repeat: 3 };
  for (let i = 0; i < argv.length; i++) {
    const a = argv[i]!;
    if (a === '--skip-1gb') f.skip1gb = true;
    else if (a === '--skip-analysis-1gb') f.skipAnalysis1gb = true;
    else if (a === '--no-hostile') f.hostile = false;
    else if (a === '--seed') f.seed = Number(argv[++i]);
    else if (a === '--naive-seconds') f.naiveSeconds = Number(argv[++i]);
    else if (a === '--sizes') f.sizes = argv[++i]!.split(',').map(Number);
    else if (a === '--repeat') f.repeat = Math.max(1, Number(argv[++i]));
    else throw new Error(`unknown flag ${a}`);
  }
  if (f.skip1gb) f.sizes = f.sizes.filter((s) => s < 1000);
  return f;
}

const load = (): string => loadavg().map((x) => x.toFixed(1)).join(' ');

// ---------------------------------------------------------------- log files (cached)

function cacheDir(): string {
  const d = join(ROOT, 'bench', 'out');
  try {
    mkdirSync(d, { recursive: true });
    return d;
  } catch {
    return tmpdir();
  }
}

/** The generated log of about `mb` MiB for `seed` (same bytes as `node dist/gen.js --seed S --mb M --no-usage`). */
async function ensureLog(seed: number, mb: number): Promise<string> {
  const file = join(cacheDir(), `gen-s${seed}-${mb}mb.jsonl`);
  if (existsSync(file)) return file;
  const tmp = `${file}.${process.pid}.tmp`;
  const out = createWriteStream(tmp);
  const t0 = performance.now();
  let batch = '';
  for (const line of generateLog({ seed, maxBytes: Math.round(mb * MB) })) {
    batch += line + '\n';
    if (batch.length > MB) {
      if (!out.write(batch)) await once(out, 'drain');
      batch = '';
    }
  }
  out.end(batch);
  await once(out, 'close');
  renameSync(tmp, file);
  process.stderr.write(`bench: generated ${file} in ${((performance.now() - t0) / 1000).toFixed(1)} s\n`);
  return file;
}

// ---------------------------------------------------------------- child measurements

interface ChildResult {
  ms: number;
  bytes: number;
  records: number;
  extra?: Record<string, unknown>;
}

/**
 * Lines of a file as strings, streamed (no whole-file buffer): newlines found in the bytes, each line
 * decoded on its own — the fastest plain way we found (decoding 1 MiB chunks to strings first and
 * searching those is 3× slower here), so the floor is not flattered by a slow reader.
 */
async function* lines(file: string, limitBytes = Infinity): AsyncGenerator<string> {
  const td = new TextDecoder();
  let carry: Uint8Array | undefined;
  let seen = 0;
  for await (const c of createReadStream(file, { highWaterMark: MB }) as AsyncIterable<Buffer>) {
    const chunk = carry ? Buffer.concat([carry, c]) : c;
    let start = 0;
    for (let nl = chunk.indexOf(10); nl !== -1; nl = chunk.indexOf(10, start)) {
      yield td.decode(chunk.subarray(start, nl));
      start = nl + 1;
    }
    carry = start < chunk.length ? Uint8Array.prototype.slice.call(chunk, start) : undefined;
    seen += c.length;
    if (seen >= limitBytes) return;
  }
  if (carry) yield td.decode(carry);
}

async function childFloor(file: string): Promise<ChildResult> {
  const t0 = performance.now();
  let records = 0;
  for await (const l of lines(file)) {
    try {
      JSON.parse(l);
      records++;
    } catch {
      /* a malformed line the generator wrote on purpose */
    }
  }
  return { ms: performance.now() - t0, bytes: statSync(file).size, records };
}

interface NaiveRecord {
  model: { name: string; encoding?: string };
  segments: { text: string }[];
}

/**
 * Every segment tokenised with no memo, until the file ends or `seconds` have passed (then MB/s of the
 * part done). "No memo" includes gpt-tokenizer's own cache of merged pieces (switched off, so every
 * piece is merged like tiktoken does); `pieceCache` keeps that cache on, for the cost model.
 */
async function childNaive(file: string, seconds: number, pieceCache = false): Promise<ChildResult> {
  const o200k = await import('gpt-tokenizer/encoding/o200k_base');
  const cl100k = await import('gpt-tokenizer/encoding/cl100k_base');
  if (!pieceCache) for (const m of [o200k, cl100k]) m.setMergeCacheSize(0);
  const t0 = performance.now();
  let records = 0;
  let bytes = 0;
  let tokens = 0;
  let chars = 0;
  let complete = true;
  for await (const l of lines(file)) {
    bytes += Buffer.byteLength(l) + 1;
    let r: NaiveRecord;
    try {
      r = JSON.parse(l) as NaiveRecord;
    } catch {
      continue;
    }
    const enc = (r.model.encoding ?? (r.model.name.startsWith('gpt-4o') ? 'o200k_base' : 'cl100k_base')) === 'o200k_base' ? o200k : cl100k;
    for (const s of r.segments) {
      tokens += enc.countTokens(s.text);
      chars += s.text.length;
    }
    records++;
    if (performance.now() - t0 > seconds * 1000) {
      complete = false;
      break;
    }
  }
  return { ms: performance.now() - t0, bytes, records, extra: { tokens, chars, complete } };
}

/** The memo's hit rate on the single-thread path (one Accountant, in file order). */
async function childMemo(file: string): Promise<ChildResult> {
  const { Accountant } = await import('../extension/core/tokens/accountant');
  const { auditStream } = await import('../extension/core/audit/audit');
  const acct = await Accountant.create();
  const t0 = performance.now();
  let records = 0;
  await auditStream(createReadStream(file, { highWaterMark: MB }), {}, { accountant: acct, analysis: false, onLedger: () => void records++ });
  return { ms: performance.now() - t0, bytes: statSync(file).size, records, extra: { ...acct.stats() } };
}

/** Memo statistics of each worker of the parallel audit (what the CLI runs above PARALLEL_MIN_BYTES). */
async function childMemoParallel(file: string): Promise<ChildResult> {
  const { auditFileParallel } = await import('../extension/core/audit/parallel');
  const t0 = performance.now();
  let workers: unknown[] = [];
  const report = await auditFileParallel(file, {}, {
    workerScript: join(ROOT, 'dist', 'auditWorker.js'),
    analysis: false,
    ledgerSeparator: ',',
    onLedgerBytes: () => undefined,
    onStats: (s) => (workers = s),
  });
  return { ms: performance.now() - t0, bytes: statSync(file).size, records: report.summary.turns, extra: { workers } };
}

async function runChild(kind: string, file: string, arg: string): Promise<void> {
  let r: ChildResult;
  if (kind === 'floor') r = await childFloor(file);
  else if (kind === 'naive') r = await childNaive(file, Number(arg));
  else if (kind === 'naive-cache') r = await childNaive(file, Number(arg), true);
  else if (kind === 'memo') r = await childMemo(file);
  else if (kind === 'memo-parallel') r = await childMemoParallel(file);
  else throw new Error(`unknown child ${kind}`);
  process.stdout.write(JSON.stringify(r) + '\n');
}

interface Measured {
  ms: number;
  rssMb: number;
  /** User + system CPU seconds of the process, all threads (NaN without /usr/bin/time). */
  cpuS: number;
  out: string;
  code: number;
}

/** Runs a command under /usr/bin/time (peak RSS of the whole process, worker threads included). */
async function measure(cmd: string[], timeout = 3 * 3600_000): Promise<Measured> {
  const rssFile = join(tmpdir(), `spillway-bench-rss-${process.pid}-${Math.random().toString(36).slice(2)}`);
  const useTime = existsSync('/usr/bin/time');
  const argv = useTime ? ['/usr/bin/time', '-f', '%M %U %S', '-o', rssFile, ...cmd] : cmd;
  const t0 = performance.now();
  const child = spawn(argv[0]!, argv.slice(1), { stdio: ['ignore', 'pipe', 'pipe'], timeout });
  let out = '';
  let err = '';
  child.stdout.on('data', (d: Buffer) => (out += d.toString()));
  child.stderr.on('data', (d: Buffer) => (err += d.toString()));
  const [code] = (await once(child, 'close')) as [number];
  const ms = performance.now() - t0;
  let rssMb = NaN;
  let cpuS = NaN;
  if (useTime && existsSync(rssFile)) {
    const [rss, user, sys] = readFileSync(rssFile, 'utf8').trim().split('\n').pop()!.split(' ').map(Number);
    rssMb = rss! / 1024;
    cpuS = user! + sys!;
    rmSync(rssFile, { force: true });
  }
  if (code !== 0) process.stderr.write(`bench: ${cmd.join(' ')} exited ${code}\n${err.slice(-2000)}\n`);
  return { ms, rssMb, cpuS, out, code };
}

async function childMeasure(kind: string, file: string, arg = ''): Promise<ChildResult & { rssMb: number; cpuS: number }> {
  const m = await measure([process.execPath, SELF, '--child', kind, file, arg]);
  const r = JSON.parse(m.out.trim().split('\n').pop()!) as ChildResult;
  return { ...r, rssMb: m.rssMb, cpuS: m.cpuS };
}

/** Counts records (lines that parse) without timing anything. */
async function countRecords(file: string): Promise<number> {
  let n = 0;
  for await (const l of lines(file)) if (l.trim()) n++;
  return n;
}

// ---------------------------------------------------------------- table

/** The run with the median wall time. */
function median<T extends { ms: number }>(runs: T[]): T {
  return [...runs].sort((a, b) => a.ms - b.ms)[Math.floor(runs.length / 2)]!;
}

const f1 = (x: number): string => (Number.isFinite(x) ? x.toFixed(1) : '–');
const f2 = (x: number): string => (Number.isFinite(x) ? x.toFixed(2) : '–');

function table(head: string[], rows: string[][]): string {
  const w = head.map((h, i) => Math.max(h.length, ...rows.map((r) => (r[i] ?? '').length)));
  const line = (r: string[]): string => '| ' + r.map((c, i) => (i === 0 ? c.padEnd(w[i]!) : c.padStart(w[i]!))).join(' | ') + ' |';
  return [line(head), '|' + w.map((n, i) => (i === 0 ? '-'.repeat(n + 2) : '-'.repeat(n + 1) + ':')).join('|') + '|', ...rows.map(line)].join('\n');
}

/** Least-squares slope of log t against log size. */
function exponent(points: { size: number; ms: number }[]): number {
  const p = points.filter((x) => x.ms > 0 && Number.isFinite(x.ms));
  if (p.length < 2) return NaN;
  const xs = p.map((x) => Math.log(x.size));
  const ys = p.map((x) => Math.log(x.ms));
  const mx = xs.reduce((a, b) => a + b, 0) / xs.length;
  const my = ys.reduce((a, b) => a + b, 0) / ys.length;
  let num = 0;
  let den = 0;
  for (let i = 0; i < xs.length; i++) {
    num += (xs[i]! - mx) * (ys[i]! - my);
    den += (xs[i]! - mx) ** 2;
  }
  return num / den;
}

async function main(): Promise<void> {
  const flags = parseFlags(process.argv.slice(2));
  const out: string[] = [];
  const say = (s: string): void => {
    out.push(s);
    process.stdout.write(s + '\n');
  };
  if (!existsSync(CLI)) throw new Error(`${CLI} is missing: run npm run build first`);
  snapshotCli();
  say(`# spillway bench — ${new Date().toISOString()}`);
  say(`node ${process.version}, ${cpus().length} cores (${cpus()[0]?.model ?? '?'}), ${(totalmem() / 2 ** 30).toFixed(1)} GiB memory, load average at start ${load()}`);
  say(`seed ${flags.seed}; sizes ${flags.sizes.join(', ')} MiB; naive capped at ${flags.naiveSeconds} s per size`);
  say('');

  interface Row {
    mb: number;
    file: string;
    bytes: number;
    records: number;
    floor: ChildResult & { rssMb: number };
    naive: ChildResult & { rssMb: number };
    audit: Measured;
    auditNoAnalysis: Measured;
    auditOneThread: Measured;
    auditOneThreadAnalysis: Measured;
    load: string;
  }
  const rows: Row[] = [];
  const tmpOut = join(tmpdir(), `spillway-bench-${process.pid}.audit.json`);
  /** `spillway audit <log> --format json` on `workers` threads (0: one thread), as its own process. */
  const auditCli = (log: string, workers: number, analysis: boolean): Promise<Measured> =>
    measure(['env', `SPILLWAY_AUDIT_WORKERS=${workers}`, process.execPath, CLI, 'audit', log, '--format', 'json', '--out', tmpOut, '--quiet', ...(analysis ? [] : ['--no-analysis'])]);
  // Start-up: the same CLI on a one-record log (process start, bundle, encoder, workers), median of 3.
  const oneRecord = join(tmpdir(), `spillway-bench-${process.pid}.one.jsonl`);
  writeFileSync(oneRecord, [...generateLog({ seed: flags.seed, turns: 1, malformedRate: 0 })].join('\n') + '\n');
  const startup = async (workers: number, analysis: boolean): Promise<number> => {
    const t: number[] = [];
    for (let i = 0; i < 3; i++) {
      const m = await auditCli(oneRecord, workers, analysis);
      t.push(m.ms);
    }
    return t.sort((a, b) => a - b)[1]!;
  };
  process.stderr.write('bench: start-up…\n');
  const start = { parallel: await startup(WORKERS, false), single: await startup(0, false), parallelAnalysis: await startup(WORKERS, true) };
  rmSync(oneRecord, { force: true });
  for (const mb of flags.sizes) {
    const file = await ensureLog(flags.seed, mb);
    const bytes = statSync(file).size;
    const records = await countRecords(file);
    // The floor and the ledger audit alternate, so both see the same moments of a shared machine.
    const floors: (ChildResult & { rssMb: number; cpuS: number })[] = [];
    const audits: Measured[] = [];
    for (let i = 0; i < flags.repeat; i++) {
      process.stderr.write(`bench: ${mb} MiB: floor and audit --no-analysis, run ${i + 1} of ${flags.repeat}…\n`);
      floors.push(await childMeasure('floor', file));
      audits.push(await auditCli(file, WORKERS, false));
    }
    const floor = median(floors);
    const auditNoAnalysis = median(audits);
    process.stderr.write(`bench: ${mb} MiB: naive…\n`);
    const naive = await childMeasure('naive', file, String(flags.naiveSeconds));
    let auditOneThread: Measured = { ms: NaN, rssMb: NaN, cpuS: NaN, out: '', code: -1 };
    if (mb < 1000) {
      process.stderr.write(`bench: ${mb} MiB: audit --no-analysis, one thread…\n`);
      auditOneThread = await auditCli(file, 0, false);
    }
    let auditOneThreadAnalysis: Measured = { ms: NaN, rssMb: NaN, cpuS: NaN, out: '', code: -1 };
    if (mb < 1000) {
      process.stderr.write(`bench: ${mb} MiB: audit (with analysis), one thread…\n`);
      auditOneThreadAnalysis = await auditCli(file, 0, true);
    }
    let audit: Measured = { ms: NaN, rssMb: NaN, cpuS: NaN, out: '', code: -1 };
    if (!(mb >= 1000 && flags.skipAnalysis1gb)) {
      process.stderr.write(`bench: ${mb} MiB: audit (with analysis)…\n`);
      audit = await auditCli(file, WORKERS, true);
    }
    rmSync(tmpOut, { force: true });
    rows.push({ mb, file, bytes, records, floor, naive, audit, auditNoAnalysis, auditOneThread, auditOneThreadAnalysis, load: load() });
  }

  const mbps = (bytes: number, ms: number): number => bytes / MB / (ms / 1000);
  const head = ['log', 'records', 'floor MB/s', 'naive MB/s', 'audit MB/s', 'audit rec/s', 'audit/floor', 'audit/naive', 'audit CPU s', 'RSS floor', 'RSS naive', 'RSS audit', 'load'];
  const body: string[][] = [];
  for (const [label, pick] of [
    ['--no-analysis, 1 thread', (r: Row) => r.auditOneThread],
    [`--no-analysis, ${WORKERS} workers`, (r: Row) => r.auditNoAnalysis],
    ['with analysis, 1 thread', (r: Row) => r.auditOneThreadAnalysis],
    [`with analysis, ${WORKERS} workers`, (r: Row) => r.audit],
  ] as const) {
    for (const r of rows) {
      if (pick(r).code === -1) continue;
      const a = pick(r);
      const floorMbps = mbps(r.floor.bytes, r.floor.ms);
      const naiveMbps = mbps(r.naive.bytes, r.naive.ms);
      const auditMbps = a.code === 0 ? mbps(r.bytes, a.ms) : NaN;
      body.push([
        `${r.mb} MiB ${label}`,
        String(r.records),
        f1(floorMbps),
        `${f2(naiveMbps)}${r.naive.extra?.['complete'] ? '' : '*'}`,
        f2(auditMbps),
        f1(a.code === 0 ? r.records / (a.ms / 1000) : NaN),
        f2(auditMbps / floorMbps),
        f1(auditMbps / naiveMbps),
        f1(a.cpuS),
        `${f1(r.floor.rssMb)} MB`,
        `${f1(r.naive.rssMb)} MB`,
        `${f1(a.rssMb)} MB`,
        r.load,
      ]);
    }
  }
  say('## Audit against the floor and the naive baseline');
  say('');
  say(table(head, body));
  say('');
  say(`Audit rows run the CLI (\`audit <log> --format json --out <tmp>\`) on worker threads (SPILLWAY_AUDIT_WORKERS=${WORKERS}, one per core; the CLI's default above ${PARALLEL_MIN_BYTES / MB} MiB), '1 thread' rows with SPILLWAY_AUDIT_WORKERS=0 (its default below).`);
  say(`floor and the worker-thread "--no-analysis" rows: median of ${flags.repeat} runs, floor and audit alternating; the other rows: one run each.`);
  say('`*` naive stopped after the time cap: its MB/s is over the part it read (its cost per byte does not fall with size: no memo).');
  say('floor: read the bytes, split at newlines, decode and `JSON.parse` each line, one thread. naive: the floor plus gpt-tokenizer `countTokens` on every segment with no memo of any kind (its own cache of merged pieces switched off, as tiktoken has none). audit CPU s: user + system time of all threads.');
  const expNo = exponent(rows.map((r) => ({ size: r.bytes, ms: r.auditNoAnalysis.ms })));
  const expAn = exponent(rows.filter((r) => r.audit.code === 0).map((r) => ({ size: r.bytes, ms: r.audit.ms })));
  const expFloor = exponent(rows.map((r) => ({ size: r.bytes, ms: r.floor.ms })));
  say('');
  say(`Time-vs-size exponent (least squares on log t vs log bytes over ${rows.length} sizes): audit --no-analysis ${f2(expNo)}, audit with analysis ${f2(expAn)}, floor ${f2(expFloor)}.`);
  say(`Audit times (s): ${rows.map((r) => `${r.mb} MiB ${f1(r.auditNoAnalysis.ms / 1000)} / ${f1(r.audit.ms / 1000)}`).join('; ')} (no analysis / analysis).`);
  say(
    `Start-up (the same CLI on a one-record log, median of 3; included in every audit row): ${f2(start.parallel / 1000)} s on ${WORKERS} workers, ${f2(start.single / 1000)} s on one thread, ${f2(start.parallelAnalysis / 1000)} s on ${WORKERS} workers with the analysis.`,
  );

  // ------------------------------------------------------------ targets
  const big = rows.find((r) => r.mb >= 1000);
  const mid = rows.find((r) => r.mb >= 100 && r.mb < 1000);
  say('');
  say('## Targets (issue 8)');
  const verdict = (ok: boolean): string => (ok ? 'met' : 'NOT met');
  for (const [label, pick] of [
    ['--no-analysis', (r: Row) => r.auditNoAnalysis],
    ['with analysis', (r: Row) => r.audit],
  ] as const) {
    const lines: string[] = [];
    if (big && pick(big).code === 0) {
      const ratio = mbps(big.bytes, pick(big).ms) / mbps(big.floor.bytes, big.floor.ms);
      lines.push(`audit/floor on 1 GiB = ${f2(ratio)} (target ≥ 0.5: ${verdict(ratio >= 0.5)})`);
      lines.push(`peak RSS on 1 GiB = ${f1(pick(big).rssMb)} MB (target < 1024: ${verdict(pick(big).rssMb < 1024)})`);
    }
    if (mid && pick(mid).code === 0) {
      const ratio = mbps(mid.bytes, pick(mid).ms) / mbps(mid.naive.bytes, mid.naive.ms);
      const st = label === '--no-analysis' ? start.parallel : start.parallelAnalysis;
      const net = mbps(mid.bytes, pick(mid).ms - st) / mbps(mid.naive.bytes, mid.naive.ms);
      lines.push(`audit/naive on 100 MiB = ${f1(ratio)}× (target ≥ 20: ${verdict(ratio >= 20)}; ${f1(net)}× without the start-up)`);
    }
    if (big && pick(big).code === 0) {
      const ratio = mbps(big.bytes, pick(big).ms) / mbps(big.naive.bytes, big.naive.ms);
      lines.push(`audit/naive on 1 GiB = ${f1(ratio)}× (for comparison)`);
    }
    const e = label === '--no-analysis' ? expNo : expAn;
    if (Number.isFinite(e)) lines.push(`exponent = ${f2(e)} (target ≤ 1.1: ${verdict(e <= 1.1)})`);
    say(`- ${label}: ${lines.join('; ')}`);
  }

  // ------------------------------------------------------------ re-pack and sweep
  say('');
  say('## Re-pack and sweep (per 100k records)');
  const rpSource = mid ?? rows[0]!;
  const rpOut = join(tmpdir(), `spillway-bench-${process.pid}.repack.jsonl`);
  process.stderr.write('bench: repack…\n');
  const rp = await measure([process.execPath, CLI, 'repack', rpSource.file, '--budget', '4k', '--out', rpOut, '--force', '--quiet']);
  rmSync(rpOut, { force: true });
  const swSource = rows[0]!;
  process.stderr.write('bench: sweep…\n');
  const sw = await measure([process.execPath, CLI, 'sweep', swSource.file, '--budgets', '4k,8k,16k,32k', '--plans', 'recent-first,evidence-first,split:60,best-value', '--format', 'json', '--quiet']);
  const per100k = (ms: number, records: number): string => `${f1((ms / 1000) * (100_000 / records))} s`;
  say(
    table(
      ['job', 'log', 'records', 'time', 'per 100k records', 'peak RSS', 'load'],
      [
        ['repack --budget 4k', `${rpSource.mb} MiB`, String(rpSource.records), `${f1(rp.ms / 1000)} s${rp.code ? ` (exit ${rp.code})` : ''}`, per100k(rp.ms, rpSource.records), `${f1(rp.rssMb)} MB`, load()],
        ['sweep 4 budgets × 4 plans', `${swSource.mb} MiB`, String(swSource.records), `${f1(sw.ms / 1000)} s${sw.code ? ` (exit ${sw.code})` : ''}`, per100k(sw.ms, swSource.records), `${f1(sw.rssMb)} MB`, load()],
      ],
    ),
  );

  // ------------------------------------------------------------ memo
  say('');
  say('## Memo (single-thread path, one Accountant, --no-analysis)');
  const memoRows: string[][] = [];
  const memoStats: { row: Row; encodedChars: number }[] = [];
  for (const r of rows.filter((x) => x.mb < 1000)) {
    process.stderr.write(`bench: memo on ${r.mb} MiB…\n`);
    const m = await childMeasure('memo', r.file);
    const s = m.extra as { hits: number; misses: number; entries: number; encodedChars: number };
    memoStats.push({ row: r, encodedChars: s.encodedChars });
    memoRows.push([`${r.mb} MiB`, String(s.hits), String(s.misses), `${f1((100 * s.hits) / (s.hits + s.misses))} %`, String(s.entries), `${f1(s.encodedChars / 1e6)} M`, `${f1(m.ms / 1000)} s`, `${f1(m.rssMb)} MB`]);
  }
  say(table(['log', 'hits', 'misses', 'hit rate', 'entries', 'chars encoded', 'time (1 thread)', 'peak RSS'], memoRows));

  // ------------------------------------------------------------ memo across worker threads
  const par = rows.find((x) => x.mb >= 100 && x.mb < 1000);
  if (par) {
    process.stderr.write(`bench: shared memo on ${par.mb} MiB…\n`);
    const m = await childMeasure('memo-parallel', par.file);
    const perWorker = (m.extra as { workers: { hits: number; misses: number; encodedChars: number; sharedHits?: number }[] }).workers;
    say('');
    say(`Worker threads on the ${par.mb} MiB log (each has its own memo; counts one worker made are shared with the others through a fixed table):`);
    say('');
    say(
      table(
        ['worker', 'hits', 'of which shared', 'misses', 'chars encoded'],
        perWorker.map((w, i) => [String(i + 1), String(w.hits), String(w.sharedHits ?? 0), String(w.misses), `${f1(w.encodedChars / 1e6)} M`]),
      ),
    );
    const single = memoStats.find((x) => x.row === par);
    const total = perWorker.reduce((n, w) => n + w.encodedChars, 0);
    if (single) say(`\nAll workers together encoded ${f1(total / 1e6)} M chars; the single-thread audit encodes ${f1(single.encodedChars / 1e6)} M.`);
  }

  // ------------------------------------------------------------ cost model: what bounds audit/floor
  const model = memoStats.length ? memoStats[memoStats.length - 1]! : undefined;
  if (model) {
    const r = model.row;
    process.stderr.write(`bench: naive with the piece cache on ${r.mb} MiB…\n`);
    const cached = await childMeasure('naive-cache', r.file, String(flags.naiveSeconds));
    const bpeNoMemo = Number(r.naive.extra?.['chars']) / (r.naive.ms / 1000);
    const bpeCharsPerSec = Number(cached.extra?.['chars']) / (cached.ms / 1000);
    const floorSecPerMb = r.floor.ms / 1000 / (r.floor.bytes / MB);
    const uniquePerMb = model.encodedChars / (r.bytes / MB);
    const bpeSecPerMb = uniquePerMb / bpeCharsPerSec;
    const cores = cpus().length;
    const bound = floorSecPerMb / ((floorSecPerMb + bpeSecPerMb) / cores);
    const naiveSecPerMb = r.naive.ms / 1000 / (r.naive.bytes / MB);
    const naiveBound = naiveSecPerMb / ((floorSecPerMb + bpeSecPerMb) / cores);
    say('');
    say(`## Cost model (${r.mb} MiB log, same run)`);
    say(`- floor: ${f1(floorSecPerMb * 1000)} ms per MiB (read + decode + JSON.parse, one thread).`);
    say(`- BPE rate (chars/s, including the floor's parse): ${f2(bpeNoMemo / 1e6)} M with no memo at all (the naive row); ${f2(bpeCharsPerSec / 1e6)} M with gpt-tokenizer's own piece cache on, as the audit runs it.`);
    say(`- text the memo cannot avoid (first sight of each text): ${f1(uniquePerMb / 1e3)} k chars per MiB of log → ${f1(bpeSecPerMb * 1000)} ms of BPE per MiB.`);
    say(`- an audit that did nothing but parse and count unseen text, perfectly spread over ${cores} cores, would reach audit/floor = ${f2(bound)} and audit/naive = ${f1(naiveBound)}× — the ceiling for this log format, in which every record carries its whole history as text (so the file grows as fast as naive's work does). Validation, packing, cut points, JSON output and the analysis come on top.`);
  }

  // ------------------------------------------------------------ hostile text
  if (flags.hostile) {
    say('');
    say('## Hostile text (issue 10)');
    process.stderr.write('bench: hostile-text table…\n');
    const { runHostileBench } = await import('./bench-hostile');
    say(await runHostileBench({ log: (l) => process.stderr.write(`bench: ${l}\n`) }));
  }
  say('');
  say(`load average at end ${load()}`);
  const dir = join(ROOT, 'bench');
  mkdirSync(dir, { recursive: true });
  const last = join(dir, 'last-run.txt');
  const tmp = `${last}.${process.pid}.tmp`;
  createWriteStream(tmp).end(out.join('\n') + '\n', () => renameSync(tmp, last));
}

if (process.argv[2] === '--child') {
  runChild(process.argv[3]!, process.argv[4]!, process.argv[5] ?? '').catch((e: unknown) => {
    process.stderr.write(String((e as Error).stack ?? e) + '\n');
    process.exit(1);
  });
} else {
  main().catch((e: unknown) => {
    process.stderr.write(`bench: ${String((e as Error).stack ?? e)}\n`);
    process.exit(1);
  });
}
