/**
 * Reads what the extension host wrote during the run and picks out errors that come from
 * Spillway: lines at [error] level in the extension host log that name our extension id or
 * its install folder (activation failures, uncaught errors with our stack frames), and every
 * [error] line in our own output channel's log.
 */
import { readdir, readFile, stat } from 'node:fs/promises';
import { join, relative } from 'node:path';

export const EXTENSION_ID = 'spillway-dev.spillway';

export interface LogFinding {
  file: string;
  entry: string;
}

async function walk(dir: string): Promise<string[]> {
  const out: string[] = [];
  let names: string[];
  try {
    names = await readdir(dir);
  } catch {
    return out;
  }
  for (const n of names) {
    const p = join(dir, n);
    const s = await stat(p);
    if (s.isDirectory()) out.push(...(await walk(p)));
    else if (n.endsWith('.log')) out.push(p);
  }
  return out;
}

/** Split a VS Code log into entries: a timestamped line plus its continuation lines (stacks). */
export function entries(text: string): string[] {
  const out: string[] = [];
  for (const line of text.split('\n')) {
    if (/^\d{4}-\d\d-\d\d[ T]\d\d:\d\d:\d\d/.test(line) || out.length === 0) out.push(line);
    else out[out.length - 1] += '\n' + line;
  }
  return out.filter((e) => e.trim() !== '');
}

export function isOurs(file: string, entry: string): boolean {
  const ourChannel = file.includes(`/${EXTENSION_ID}/`) || /spillway/i.test(file.split('/').pop() ?? '');
  if (!/\[error\]/i.test(entry)) return false;
  return ourChannel || entry.includes(EXTENSION_ID);
}

/** All extension-host log files of the run (every window session, every reload). */
export async function extensionHostLogs(userDataDir: string): Promise<string[]> {
  const all = await walk(join(userDataDir, 'logs'));
  return all.filter((f) => f.includes('/exthost'));
}

export async function ourErrors(userDataDir: string): Promise<LogFinding[]> {
  const findings: LogFinding[] = [];
  for (const f of await extensionHostLogs(userDataDir)) {
    const text = await readFile(f, 'utf8');
    for (const e of entries(text)) if (isOurs(f, e)) findings.push({ file: relative(userDataDir, f), entry: e.slice(0, 2000) });
  }
  return findings;
}
