/**
 * VS Code does not hand documents over 50 MB to extensions, so a large log opened in an editor gets
 * no CodeLens, diagnostics or panel. Say so once per file and offer the streamed HTML audit instead.
 */
import * as vscode from 'vscode';
import { hasLogExtension } from '../core/view/recognise';

const SYNC_LIMIT_BYTES = 50 * 1024 * 1024;

export function watchLargeLogs(auditCommand: string): vscode.Disposable {
  const told = new Set<string>();
  let timer: ReturnType<typeof setTimeout> | undefined;
  const check = async (): Promise<void> => {
    const input = vscode.window.tabGroups.activeTabGroup.activeTab?.input;
    if (!(input instanceof vscode.TabInputText)) return;
    const uri = input.uri;
    const key = uri.toString();
    if (told.has(key) || !hasLogExtension(uri.path)) return;
    if (vscode.workspace.textDocuments.some((d) => d.uri.toString() === key)) return;
    const size = await vscode.workspace.fs.stat(uri).then((s) => s.size, () => 0);
    if (size <= SYNC_LIMIT_BYTES) return;
    told.add(key);
    const action = 'Audit to HTML Report';
    const choice = await vscode.window.showInformationMessage(
      `Spillway: ${vscode.workspace.asRelativePath(uri, false)} is ${(size / 1048576).toFixed(0)} MB; VS Code passes only files up to 50 MB to extensions, ` +
        'so this editor shows no Spillway figures. The HTML report (or the spillway CLI) streams the whole log.',
      action,
    );
    if (choice === action) await vscode.commands.executeCommand(auditCommand, uri);
  };
  const sub = vscode.window.tabGroups.onDidChangeTabs(() => {
    if (timer) clearTimeout(timer);
    // Give VS Code time to hand a small document over before concluding it will not.
    timer = setTimeout(() => void check(), 1500);
  });
  return {
    dispose: () => {
      if (timer) clearTimeout(timer);
      sub.dispose();
    },
  };
}
