/**
 * File access for logs and reports. Local files stream from disk (a 2 GB log never sits in memory);
 * every other scheme (remote, virtual) goes through `vscode.workspace.fs`. Outputs are written
 * atomically beside their source: a temp file in the same folder, then a rename.
 */
import * as vscode from 'vscode';
import { createReadStream } from 'node:fs';
import { randomBytes } from 'node:crypto';

const CHUNK = 1 << 20;

/** The bytes of `uri` as a stream of chunks. */
export async function* readChunks(uri: vscode.Uri): AsyncGenerator<Uint8Array> {
  if (uri.scheme === 'file') {
    for await (const chunk of createReadStream(uri.fsPath, { highWaterMark: CHUNK })) yield chunk as Buffer;
    return;
  }
  const all = await vscode.workspace.fs.readFile(uri);
  for (let at = 0; at < all.length; at += CHUNK) yield all.subarray(at, Math.min(all.length, at + CHUNK));
}

/** Writes `bytes` to `target` via a temp file in the same folder and a rename; never leaves a partial file. */
export async function writeAtomically(target: vscode.Uri, bytes: Uint8Array): Promise<void> {
  const dir = vscode.Uri.joinPath(target, '..');
  const base = target.path.split('/').pop() ?? 'out';
  const tmp = vscode.Uri.joinPath(dir, `.${base}.${randomBytes(6).toString('hex')}.tmp`);
  try {
    await vscode.workspace.fs.writeFile(tmp, bytes);
    await vscode.workspace.fs.rename(tmp, target, { overwrite: true });
  } catch (e) {
    await vscode.workspace.fs.delete(tmp).then(undefined, () => undefined);
    throw e;
  }
}

/** `dir/name.jsonl` → `dir/name.<suffix>`. */
export function besideWithSuffix(source: vscode.Uri, suffix: string): vscode.Uri {
  const base = source.path.split('/').pop() ?? 'log';
  const stem = base.replace(/\.(jsonl|ndjson|json|log|txt)$/i, '');
  return vscode.Uri.joinPath(source, '..', `${stem}.${suffix}`);
}
