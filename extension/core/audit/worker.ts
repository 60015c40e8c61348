/**
 * Worker-thread entry of the parallel audit (bundled to dist/auditWorker.js): reads a range of whole
 * lines of the log itself, parses, validates and audits it with its own accountant (memo per worker),
 * and sends back, per line, an issue or the ledger — whole, or as summary fields plus the ledgers' JSON
 * encoded once as UTF-8 in a buffer that is transferred, not copied.
 */
import { parentPort } from 'node:worker_threads';
import { openSync, readSync } from 'node:fs';
import { parseRecordLine, readLogLines } from '../log/reader';
import { Accountant } from '../tokens/accountant';
import { SharedCounts } from '../tokens/sharedCounts';
import { loadShingleHasher } from '../analysis/shingles';
import { auditOne, type SummaryFields } from './audit';
import type { BatchReply, LineRange, WorkerInit, WorkerReply, WorkerRequest, WireOutcome } from './parallel';

const port = parentPort;
if (!port) throw new Error('worker.ts must run in a worker thread');

const CHUNK = 1 << 20;

/** UTF-8 bytes appended straight into one growing buffer of its own (so it can be transferred). */
class Utf8Sink {
  private buf = Buffer.allocUnsafeSlow(1 << 20);
  length = 0;

  add(s: string): void {
    const worst = s.length * 3; // UTF-16 unit → at most 3 UTF-8 bytes
    if (this.length + worst > this.buf.length) {
      const next = Buffer.allocUnsafeSlow(Math.max(this.buf.length * 2, this.length + worst));
      this.buf.copy(next, 0, 0, this.length);
      this.buf = next;
    }
    this.length += this.buf.write(s, this.length, 'utf8');
  }

  bytes(): Uint8Array {
    return new Uint8Array(this.buf.buffer, this.buf.byteOffset, this.length);
  }
}

let init: WorkerInit | undefined;
let acct: Accountant | undefined;
let fd = -1;

/** The range's bytes in chunks; a fresh buffer each time, since the reader may keep a line's tail across chunks. */
function* rangeChunks(range: LineRange): Generator<Uint8Array> {
  for (let pos = range.start; pos < range.end; ) {
    const b = Buffer.allocUnsafeSlow(Math.min(CHUNK, range.end - pos));
    const n = readSync(fd, b, 0, b.length, pos);
    if (n === 0) return; // the file shrank under us: what is gone is gone
    pos += n;
    yield n === b.length ? b : b.subarray(0, n);
  }
}

async function handle(msg: WorkerRequest): Promise<{ reply: WorkerReply; transfer?: ArrayBuffer[] }> {
  if (msg.type === 'init') {
    init = msg;
    acct = await Accountant.create({
      ...(msg.memoEntries ? { memoEntries: msg.memoEntries } : {}),
      ...(msg.shared ? { shared: SharedCounts.attach(msg.shared) } : {}),
    });
    if (msg.analysis) await loadShingleHasher();
    fd = openSync(msg.file, 'r');
    return { reply: { type: 'ready' } };
  }
  if (!init || !acct) throw new Error('worker used before init');
  const out: WireOutcome[] = [];
  const sep = init.separator;
  const sink = sep === undefined ? undefined : new Utf8Sink();
  for await (const item of readLogLines(rangeChunks(msg.range), init.read, { offset: msg.range.start, line: msg.range.line })) {
    if ('issue' in item) {
      out.push({ issue: item.issue });
      continue;
    }
    const parsed = parseRecordLine(item.text, item.line);
    if ('issue' in parsed) {
      out.push({ issue: parsed.issue });
      continue;
    }
    const r = await auditOne({ line: item.line, offset: item.offset, record: parsed.record }, init.opts, acct, init.analysis);
    if ('issue' in r) out.push({ issue: r.issue });
    else if (sink) {
      const l = r.ledger;
      const s: SummaryFields = { state: l.state, spill: l.spill, conversation: l.conversation };
      if (l.rank1Fate !== undefined) s.rank1Fate = l.rank1Fate;
      if (l.analysis !== undefined) s.analysis = l.analysis;
      out.push({ s, o: item.offset });
      sink.add(sep!);
      sink.add(JSON.stringify(l));
    } else out.push({ l: r.ledger, o: item.offset });
  }
  const reply: BatchReply = { type: 'batch', id: msg.id, out, stats: acct.stats() };
  if (!sink) return { reply };
  reply.bytes = sink.bytes();
  return { reply, transfer: [reply.bytes.buffer as ArrayBuffer] };
}

port.on('message', (msg: WorkerRequest) => {
  handle(msg).then(
    ({ reply, transfer }) => port.postMessage(reply, transfer),
    (e: unknown) => port.postMessage({ type: 'error', id: msg.type === 'batch' ? msg.id : -1, message: String((e as Error).stack ?? e) } satisfies WorkerReply),
  );
});
