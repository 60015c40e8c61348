/**
 * Every process the harness starts goes through here, in its own process group, so that one
 * `kill(-pgid)` ends it with all its children (code-server forks an extension host, a file
 * watcher and a pty host). Groups are stopped in `stopAll()` from the harness's `finally`, and
 * also on SIGINT/SIGTERM/SIGHUP and at process exit, so a crash or Ctrl-C leaves nothing behind.
 */
import { spawn, type ChildProcess, type SpawnOptions } from 'node:child_process';
import { openSync, closeSync } from 'node:fs';

const groups = new Set<ChildProcess>();
let handlersInstalled = false;

function alive(pgid: number): boolean {
  try {
    process.kill(-pgid, 0);
    return true;
  } catch {
    return false;
  }
}

function signalGroup(child: ChildProcess, sig: NodeJS.Signals): void {
  if (child.pid === undefined) return;
  try {
    process.kill(-child.pid, sig);
  } catch {
    /* group already gone */
  }
}

/** Stop one group: SIGTERM, then SIGKILL after `graceMs`. Resolves when no member is left. */
export async function stopGroup(child: ChildProcess, graceMs = 5000): Promise<void> {
  const pid = child.pid;
  groups.delete(child);
  if (pid === undefined || !alive(pid)) return;
  signalGroup(child, 'SIGTERM');
  const deadline = Date.now() + graceMs;
  while (alive(pid) && Date.now() < deadline) await new Promise((r) => setTimeout(r, 100));
  if (alive(pid)) signalGroup(child, 'SIGKILL');
  while (alive(pid) && Date.now() < deadline + 2000) await new Promise((r) => setTimeout(r, 50));
}

export async function stopAll(): Promise<void> {
  await Promise.all([...groups].map((c) => stopGroup(c)));
}

function installHandlers(): void {
  if (handlersInstalled) return;
  handlersInstalled = true;
  // Last resort if the harness dies without reaching its finally block: synchronous SIGKILL.
  process.on('exit', () => {
    for (const c of groups) signalGroup(c, 'SIGKILL');
  });
  for (const sig of ['SIGINT', 'SIGTERM', 'SIGHUP'] as const) {
    process.once(sig, () => {
      process.stderr.write(`\n[e2e] ${sig}: stopping everything the harness started\n`);
      void stopAll().finally(() => process.exit(sig === 'SIGINT' ? 130 : 143));
    });
  }
}

/** Spawn `cmd` as the leader of a new process group, output appended to `logFile`. */
export function spawnGroup(cmd: string, args: string[], logFile: string, opts: SpawnOptions = {}): ChildProcess {
  installHandlers();
  const fd = openSync(logFile, 'a');
  try {
    const child = spawn(cmd, args, { ...opts, detached: true, stdio: ['ignore', fd, fd] });
    groups.add(child);
    child.once('exit', () => {
      // The leader exited; children may remain in the group, so keep it until stopGroup checks.
    });
    return child;
  } finally {
    closeSync(fd);
  }
}

/** Run a command to completion (its own group too, so a timeout kills all of it). */
export async function runToEnd(
  cmd: string,
  args: string[],
  logFile: string,
  opts: SpawnOptions & { timeoutMs?: number } = {},
): Promise<number> {
  const child = spawnGroup(cmd, args, logFile, opts);
  const timeoutMs = opts.timeoutMs ?? 10 * 60_000;
  return await new Promise<number>((resolve, reject) => {
    const timer = setTimeout(() => {
      void stopGroup(child).then(() => reject(new Error(`${cmd} ${args.join(' ')}: timed out after ${timeoutMs} ms`)));
    }, timeoutMs);
    child.once('error', (e) => {
      clearTimeout(timer);
      groups.delete(child);
      reject(e);
    });
    child.once('exit', (code, signal) => {
      clearTimeout(timer);
      void stopGroup(child, 1000).then(() => resolve(code ?? (signal ? 128 : 1)));
    });
  });
}
