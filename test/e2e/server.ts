/**
 * An isolated code-server (a real VS Code build) on 127.0.0.1: its own user-data, extensions,
 * XDG and temp folders under the run folder, the packaged extension installed from its .vsix,
 * and a COPY of sample-workspace as the opened folder so the original is never touched.
 */
import { createServer } from 'node:net';
import { cp, mkdir, readdir, readFile, writeFile } from 'node:fs/promises';
import { existsSync } from 'node:fs';
import { join } from 'node:path';
import type { ChildProcess } from 'node:child_process';
import { runToEnd, spawnGroup, stopGroup } from './processes';

export interface Tools {
  /** Node 24 folder (bin/node). */
  n24: string;
  /** code-server's out/node/entry.js */
  codeServer: string;
}

export interface Server {
  url: string;
  port: number;
  runDir: string;
  userDataDir: string;
  workspace: string;
  settingsFile: string;
  logFile: string;
  /** Folder of the installed extension (its package.json is what VS Code sees). */
  extensionDir: string;
  stop(): Promise<void>;
}

/** User settings: quiet, offline, nothing that steals focus or phones home. */
export const baseSettings: Record<string, unknown> = {
  'telemetry.telemetryLevel': 'off',
  'chat.disableAIFeatures': true,
  'extensions.autoCheckUpdates': false,
  'extensions.autoUpdate': false,
  'extensions.ignoreRecommendations': true,
  'workbench.startupEditor': 'none',
  'workbench.tips.enabled': false,
  'workbench.enableExperiments': false,
  'workbench.colorTheme': 'Default Dark Modern',
  'update.mode': 'none',
  'security.workspace.trust.enabled': false,
  'editor.minimap.enabled': false,
  'editor.codeLens': true,
  'files.autoSave': 'off',
  'window.restoreWindows': 'all',
};

export async function freePort(): Promise<number> {
  return await new Promise((resolve, reject) => {
    const srv = createServer();
    srv.once('error', reject);
    srv.listen(0, '127.0.0.1', () => {
      const addr = srv.address();
      const port = typeof addr === 'object' && addr ? addr.port : 0;
      srv.close(() => resolve(port));
    });
  });
}

function env(runDir: string): NodeJS.ProcessEnv {
  const e: NodeJS.ProcessEnv = { ...process.env };
  // Nothing from the developer's own VS Code/code-server setup leaks in.
  for (const k of Object.keys(e)) if (k.startsWith('VSCODE_') || k.startsWith('CODE_SERVER')) delete e[k];
  return {
    ...e,
    XDG_CONFIG_HOME: join(runDir, 'xdg'),
    XDG_DATA_HOME: join(runDir, 'xdg-data'),
    TMPDIR: join(runDir, 'tmp'),
    // Keep the workbench from offering to open anything remote.
    CS_DISABLE_GETTING_STARTED_OVERRIDE: '1',
  };
}

export async function writeSettings(file: string, extra: Record<string, unknown> = {}): Promise<void> {
  let current: Record<string, unknown> = {};
  if (existsSync(file)) {
    try {
      current = JSON.parse(await readFile(file, 'utf8')) as Record<string, unknown>;
    } catch {
      current = {};
    }
  }
  await writeFile(file, JSON.stringify({ ...baseSettings, ...current, ...extra }, null, 2));
}

export async function startServer(tools: Tools, opts: { runDir: string; vsix: string; sourceWorkspace: string }): Promise<Server> {
  const { runDir } = opts;
  const userDataDir = join(runDir, 'ud');
  const extDir = join(runDir, 'ext');
  const workspace = join(runDir, 'workspace');
  const settingsFile = join(userDataDir, 'User', 'settings.json');
  const logFile = join(runDir, 'code-server.log');
  for (const d of ['xdg', 'xdg-data', 'tmp', 'ud/User', 'ext']) await mkdir(join(runDir, d), { recursive: true });
  await cp(opts.sourceWorkspace, workspace, { recursive: true });
  await writeSettings(settingsFile);

  const port = await freePort();
  const config = join(runDir, 'config.yaml');
  await writeFile(config, `bind-addr: 127.0.0.1:${port}\nauth: none\ncert: false\n`);
  const node = join(tools.n24, 'bin', 'node');
  const common = ['--config', config, '--user-data-dir', userDataDir, '--extensions-dir', extDir];

  const installCode = await runToEnd(node, [tools.codeServer, ...common, '--install-extension', opts.vsix], logFile, {
    env: env(runDir),
    timeoutMs: 120_000,
  });
  const installed = (await readdir(extDir)).filter((d) => d.startsWith('spillway-dev.spillway-'));
  if (installCode !== 0 || installed.length === 0) {
    throw new Error(`installing ${opts.vsix} failed (exit ${installCode}); see ${logFile}:\n${await tail(logFile)}`);
  }

  const child: ChildProcess = spawnGroup(
    node,
    [
      tools.codeServer,
      ...common,
      '--auth', 'none',
      '--bind-addr', `127.0.0.1:${port}`,
      '--disable-telemetry',
      '--disable-update-check',
      '--disable-workspace-trust',
      '--disable-getting-started-override',
      '--ignore-last-opened',
      workspace,
    ],
    logFile,
    { env: env(runDir), cwd: runDir },
  );
  let exited = false;
  child.once('exit', () => (exited = true));
  const url = `http://127.0.0.1:${port}`;
  const deadline = Date.now() + 90_000;
  for (;;) {
    if (exited) throw new Error(`code-server exited during start; see ${logFile}:\n${await tail(logFile)}`);
    try {
      const r = await fetch(`${url}/healthz`, { signal: AbortSignal.timeout(2000) });
      if (r.ok) break;
    } catch {
      /* not listening yet */
    }
    if (Date.now() > deadline) {
      await stopGroup(child);
      throw new Error(`code-server not healthy after 90 s; see ${logFile}:\n${await tail(logFile)}`);
    }
    await new Promise((r) => setTimeout(r, 300));
  }
  return {
    url,
    port,
    runDir,
    userDataDir,
    workspace,
    settingsFile,
    logFile,
    extensionDir: join(extDir, installed[0]!),
    stop: () => stopGroup(child),
  };
}

export async function tail(file: string, lines = 30): Promise<string> {
  try {
    return (await readFile(file, 'utf8')).split('\n').slice(-lines).join('\n');
  } catch {
    return '(no log)';
  }
}
