/** The "Spillway" log output channel (a LogOutputChannel: its file is what the e2e suite reads). */
import * as vscode from 'vscode';

let channel: vscode.LogOutputChannel | undefined;

export function output(): vscode.LogOutputChannel {
  channel ??= vscode.window.createOutputChannel('Spillway', { log: true });
  return channel;
}

export function disposeOutput(): void {
  channel?.dispose();
  channel = undefined;
}
