/**
 * A minimal LSP client for tests and benchmarks: starts the bundled server (server/dist/lsp.js)
 * over stdio, answers the requests a server sends to its client (configuration, progress,
 * registrations), records every notification, and waits on them by predicate — never by sleep.
 */
import { type ChildProcess, spawn } from 'node:child_process';
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { type MessageConnection, ProgressType, StreamMessageReader, StreamMessageWriter, createMessageConnection } from 'vscode-jsonrpc/node';
import type { Diagnostic, InitializeResult, PublishDiagnosticsParams } from 'vscode-languageserver-protocol';

export const ROOT = join(__dirname, '..', '..');
export const SERVER = join(ROOT, 'server', 'dist', 'lsp.js');

export interface TestClient {
  connection: MessageConnection;
  child: ChildProcess;
  initialize: InitializeResult;
  /** Every publishDiagnostics, in arrival order. */
  published: PublishDiagnosticsParams[];
  notifications: { method: string; params: unknown }[];
  stderr: string[];
  settings: Record<string, unknown>;
  open(path: string, text: string, languageId?: string): string;
  change(uri: string, version: number, text: string): void;
  waitForDiagnostics(uri: string, pred?: (d: PublishDiagnosticsParams) => boolean, timeoutMs?: number): Promise<Diagnostic[]>;
  waitForNotification(method: string, pred?: (p: unknown) => boolean, timeoutMs?: number): Promise<unknown>;
  request<R>(method: string, params: unknown): Promise<R>;
  /** Records `$/progress` for a token as notifications (vscode-jsonrpc routes them to progress handlers only). */
  trackProgress(token: string): void;
  close(): Promise<number | null>;
}

export function uriOf(path: string): string {
  return pathToFileURL(path).href;
}

export interface TestClientOptions {
  settings?: Record<string, unknown>;
  rootPath?: string;
  capabilities?: Record<string, unknown>;
  /** Another server bundle (e.g. the one staged for the .vsix). */
  serverPath?: string;
}

export async function startTestClient(opts: TestClientOptions = {}): Promise<TestClient> {
  const child = spawn(process.execPath, [opts.serverPath ?? SERVER, '--stdio'], { stdio: ['pipe', 'pipe', 'pipe'] });
  const connection = createMessageConnection(new StreamMessageReader(child.stdout!), new StreamMessageWriter(child.stdin!));
  const published: PublishDiagnosticsParams[] = [];
  const notifications: { method: string; params: unknown }[] = [];
  const stderr: string[] = [];
  const waiters: (() => void)[] = [];
  const wake = (): void => {
    for (const w of waiters.splice(0)) w();
  };
  child.stderr!.on('data', (b: Buffer) => stderr.push(b.toString()));
  const client: Partial<TestClient> = { settings: opts.settings ?? {} };
  connection.onNotification((method, params) => {
    notifications.push({ method, params });
    if (method === 'textDocument/publishDiagnostics') published.push(params as PublishDiagnosticsParams);
    wake();
  });
  connection.onRequest('workspace/configuration', (p: { items: { section?: string }[] }) => p.items.map(() => client.settings));
  connection.onRequest('window/workDoneProgress/create', () => null);
  connection.onRequest('client/registerCapability', () => null);
  connection.onRequest('workspace/codeLens/refresh', () => null);
  connection.onRequest('workspace/inlayHint/refresh', () => null);
  connection.listen();
  const rootUri = opts.rootPath ? uriOf(opts.rootPath) : null;
  const initialize = (await connection.sendRequest('initialize', {
    processId: process.pid,
    rootUri,
    workspaceFolders: rootUri ? [{ uri: rootUri, name: 'ws' }] : null,
    capabilities: {
      workspace: { configuration: true, didChangeConfiguration: { dynamicRegistration: true }, codeLens: { refreshSupport: true }, inlayHint: { refreshSupport: true } },
      window: { workDoneProgress: true },
      textDocument: { publishDiagnostics: { versionSupport: true }, hover: { contentFormat: ['markdown', 'plaintext'] } },
      ...(opts.capabilities ?? {}),
    },
  })) as InitializeResult;
  await connection.sendNotification('initialized', {});

  const waitFor = <T>(probe: () => T | undefined, timeoutMs: number, what: string): Promise<T> =>
    new Promise((resolve, reject) => {
      const timer = setTimeout(() => reject(new Error(`timed out after ${timeoutMs} ms waiting for ${what}; stderr: ${stderr.join('').slice(-2000)}`)), timeoutMs);
      const check = (): void => {
        const v = probe();
        if (v !== undefined) {
          clearTimeout(timer);
          resolve(v);
        } else waiters.push(check);
      };
      check();
    });

  Object.assign(client, {
    connection, child, initialize, published, notifications, stderr,
    open(path: string, text: string, languageId = 'c') {
      const uri = uriOf(path);
      void connection.sendNotification('textDocument/didOpen', { textDocument: { uri, languageId, version: 1, text } });
      return uri;
    },
    change(uri: string, version: number, text: string) {
      void connection.sendNotification('textDocument/didChange', { textDocument: { uri, version }, contentChanges: [{ text }] });
    },
    waitForDiagnostics(uri: string, pred: (p: PublishDiagnosticsParams) => boolean = () => true, timeoutMs = 60_000) {
      let seen = 0;
      return waitFor(() => {
        for (; seen < published.length; seen++) {
          const p = published[seen];
          if (p.uri === uri && pred(p)) return p.diagnostics;
        }
        return undefined;
      }, timeoutMs, `diagnostics of ${uri}`);
    },
    waitForNotification(method: string, pred: (p: unknown) => boolean = () => true, timeoutMs = 60_000) {
      let seen = 0;
      return waitFor(() => {
        for (; seen < notifications.length; seen++) {
          const n = notifications[seen];
          if (n.method === method && pred(n.params)) return n.params ?? null;
        }
        return undefined;
      }, timeoutMs, method);
    },
    request<R>(method: string, params: unknown) {
      return connection.sendRequest(method, params) as Promise<R>;
    },
    trackProgress(token: string) {
      connection.onProgress(new ProgressType<unknown>(), token, (value) => {
        notifications.push({ method: '$/progress', params: { token, value } });
        wake();
      });
    },
    async close() {
      const exited = new Promise<number | null>((r) => child.once('exit', (code) => r(code)));
      try {
        await connection.sendRequest('shutdown');
        await connection.sendNotification('exit');
      } catch {
        child.kill();
      }
      const code = await Promise.race([exited, new Promise<number | null>((r) => setTimeout(() => (child.kill(), r(-1)), 5000))]);
      connection.dispose();
      return code;
    },
  });
  return client as TestClient;
}
