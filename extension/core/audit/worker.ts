/**
 * Worker-thread entry of the parallel audit (bundled to dist/auditWorker.js): parses, validates and
 * audits batches of raw lines with its own accountant (memo per worker), and sends back, per line, an
 * issue or the ledger — as JSON text plus the few fields the log summary needs, or whole.
 */
import { parentPort } from 'node:worker_threads';
import { parseRecordLine } from '../log/validate';
import { Accountant } from '../tokens/accountant';
import { loadShingleHasher } from '../analysis/shingles';
import { auditOne, type SummaryFields } from './audit';
import type { WorkerInit, WorkerReply, WorkerRequest, WireOutcome } from './parallel';

const port = parentPort;
if (!port) throw new Error('worker.ts must run in a worker thread');

let init: WorkerInit | undefined;
let acct: Accountant | undefined;

async function handle(msg: WorkerRequest): Promise<WorkerReply> {
  if (msg.type === 'init') {
    init = msg;
    acct = await Accountant.create(msg.memoEntries ? { memoEntries: msg.memoEntries } : {});
    if (msg.analysis) await loadShingleHasher();
    return { type: 'ready' };
  }
  if (!init || !acct) throw new Error('worker used before init');
  const out: WireOutcome[] = new Array<WireOutcome>(msg.items.length);
  for (let k = 0; k < msg.items.length; k++) {
    const item = msg.items[k]!;
    if ('issue' in item) {
      out[k] = { issue: item.issue };
      continue;
    }
    const parsed = parseRecordLine(item.text, item.line);
    if ('issue' in parsed) {
      out[k] = { issue: parsed.issue };
      continue;
    }
    const r = await auditOne({ line: item.line, offset: item.offset, record: parsed.record }, init.opts, acct, init.analysis);
    if ('issue' in r) out[k] = { issue: r.issue };
    else if (init.json) {
      const l = r.ledger;
      const s: SummaryFields = { state: l.state, spill: l.spill, conversation: l.conversation };
      if (l.rank1Fate !== undefined) s.rank1Fate = l.rank1Fate;
      if (l.analysis !== undefined) s.analysis = l.analysis;
      out[k] = { s, j: JSON.stringify(l), o: item.offset };
    } else out[k] = { l: r.ledger, o: item.offset };
  }
  return { type: 'batch', id: msg.id, out, stats: acct.stats() };
}

port.on('message', (msg: WorkerRequest) => {
  handle(msg).then(
    (reply) => port.postMessage(reply),
    (e: unknown) => port.postMessage({ type: 'error', id: msg.type === 'batch' ? msg.id : -1, message: String((e as Error).stack ?? e) } satisfies WorkerReply),
  );
});
