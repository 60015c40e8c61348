/** CLI I/O: streaming file input, atomic output beside the target, exit codes. */
import { createReadStream, createWriteStream, mkdirSync, promises as fsp, statSync, type WriteStream } from 'node:fs';
import { basename, dirname, join, resolve } from 'node:path';
import { randomBytes } from 'node:crypto';
import { once } from 'node:events';

export const EXIT = { ok: 0, threshold: 1, usage: 2 } as const;

/** An error that ends the CLI with exit code 2 and a one-line reason. */
export class UsageError extends Error {}

export async function openLog(path: string): Promise<{ chunks: AsyncIterable<Uint8Array>; size: number }> {
  let size: number;
  try {
    const st = await fsp.stat(path);
    if (!st.isFile()) throw new UsageError(`${path} is not a file`);
    size = st.size;
    await fsp.access(path);
  } catch (e) {
    if (e instanceof UsageError) throw e;
    throw new UsageError(`cannot read ${path}: ${(e as NodeJS.ErrnoException).code ?? (e as Error).message}`);
  }
  return { chunks: fileChunks(path), size };
}

/** The file's bytes in 1 MiB chunks. It is opened only when reading starts: the parallel audit's workers read the file themselves. */
async function* fileChunks(path: string): AsyncGenerator<Uint8Array> {
  yield* createReadStream(path, { highWaterMark: 1 << 20 }) as AsyncIterable<Uint8Array>;
}

/**
 * A writer that lands atomically: it writes a temp file in the target's folder and renames it over
 * the target only on `commit()`; `abort()` removes the temp file, so a cancelled run leaves nothing.
 */
export interface AtomicWriter {
  write(s: string): Promise<void>;
  /** Queues without waiting (the stream keeps order); for synchronous callbacks. */
  push(s: string | Uint8Array): void;
  commit(): Promise<void>;
  abort(): Promise<void>;
}

export function atomicWriter(target: string): AtomicWriter {
  const abs = resolve(target);
  // A device or pipe (/dev/null, /dev/stdout, a FIFO) is written in place: renaming over it would replace it.
  let special = false;
  try {
    special = !statSync(abs).isFile();
  } catch {
    special = false;
  }
  if (special) return streamWriter(createWriteStream(abs, { flags: 'a' }));
  mkdirSync(dirname(abs), { recursive: true });
  const tmp = join(dirname(abs), `.${basename(abs)}.${randomBytes(6).toString('hex')}.tmp`);
  const base = streamWriter(createWriteStream(tmp, { flags: 'wx' }));
  return {
    ...base,
    async commit() {
      await base.commit();
      await fsp.rename(tmp, abs);
    },
    async abort() {
      await base.abort().catch(() => undefined);
      await fsp.rm(tmp, { force: true });
    },
  };
}

function streamWriter(out: WriteStream): AtomicWriter {
  const close = async (): Promise<void> => {
    if (out.closed) return;
    out.end();
    await once(out, 'close');
  };
  return {
    async write(s) {
      if (!out.write(s)) await once(out, 'drain');
    },
    push(s) {
      out.write(s);
    },
    commit: close,
    abort: close,
  };
}

/** A writer to stdout with the same interface (commit/abort are no-ops). */
export function stdoutWriter(): AtomicWriter {
  return {
    async write(s) {
      if (!process.stdout.write(s)) await once(process.stdout, 'drain');
    },
    push(s) {
      process.stdout.write(s);
    },
    async commit() {},
    async abort() {},
  };
}

/** Refuses to write over the input or (without force) an existing file. */
export async function checkOutputPath(out: string, input: string, force: boolean): Promise<void> {
  if (resolve(out) === resolve(input)) throw new UsageError(`refusing to write over the input ${input}`);
  if (!force) {
    const exists = await fsp
      .access(out)
      .then(() => true)
      .catch(() => false);
    if (exists) throw new UsageError(`${out} exists; pass --force to replace it`);
  }
}

/** Parses a token amount: `8192`, `8k` (= 8 × 1024, the usual way context windows are named), `1m`. */
export function parseTokens(s: string, what: string): number {
  const m = /^(\d+)([kKmM]?)$/.exec(s.trim());
  if (!m) throw new UsageError(`${what} must be a whole number of tokens like 8192 or 8k, got "${s}"`);
  const mult = m[2] === '' ? 1 : /k/i.test(m[2]!) ? 1024 : 1024 * 1024;
  const v = Number(m[1]) * mult;
  if (!Number.isSafeInteger(v)) throw new UsageError(`${what} is too large: ${s}`);
  return v;
}

/** The first lines of a file (at most `bytes` bytes read), for cheap format recognition. */
export async function headLines(path: string, bytes = 64 * 1024): Promise<string[]> {
  const fh = await fsp.open(path, 'r');
  try {
    const buf = Buffer.alloc(bytes);
    const { bytesRead } = await fh.read(buf, 0, bytes, 0);
    return buf.subarray(0, bytesRead).toString('utf8').split('\n').slice(0, 8);
  } finally {
    await fh.close();
  }
}
