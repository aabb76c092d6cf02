/**
 * The Offload Ledger language server: wires the LSP connection to the analysis scheduler and the
 * feature modules. `startServer()` with no argument reads the transport from the command line
 * (`--stdio`, `--node-ipc`, `--socket=N`), as `offload-ledger serve` and the extension start it.
 */
import { fileURLToPath } from 'node:url';
import { MACHINES_FILE } from '../host/machines';
import { neighbourSources } from './analysis/neighbours';
import { databaseOf, preprocessFor, projectNeighbours } from './analysis/project';
import { existsSync } from 'node:fs';
import { dirname, isAbsolute, join } from 'node:path';
import { readCompilerFlags, splitCommandLine } from '../core/preprocessor/flags';
import {
  CodeLensRefreshRequest,
  type Connection,
  DidChangeConfigurationNotification,
  type InitializeParams,
  type InitializeResult,
  ProposedFeatures,
  TextDocumentSyncKind,
  TextDocuments,
  createConnection,
} from 'vscode-languageserver/node';
import { TextDocument } from 'vscode-languageserver-textdocument';
import { TOOL_VERSION } from '../core/report';
import type { Settings } from '../settings/validate';
import type { AnalysisEngine, EngineEvents } from './analysis/engine';
import { InProcessEngine } from './analysis/inProcess';
import type { AnalysisJob } from './analysis/job';
import { ViewCache } from './analysis/reuse';
import { Scheduler } from './analysis/scheduler';
import { WorkerEngine } from './analysis/workerEngine';
import { ConfigStore } from './config';
import { codesHref } from './docsLink';
import { codeActionsFor } from './features/codeActions';
import { hoverAt } from './features/hover';
import { checkWorkspace } from './features/workspaceCheck';
import { languageOfDocument, pathOfUri } from './languages';
import { resolveProfile } from './profile';
import {
  DebugStatsRequest, type PlanningData, PlanningDataRequest, ProjectStatusNotification, type ProjectStatusParams, ServerCommands, StatusNotification, type StatusParams,
} from './protocol';

export interface ServerOptions {
  /** Analysis engine; by default a worker thread when the bundled worker script is present. */
  engine?: AnalysisEngine;
  /** Directory to search upward from for docs/lsp/codes.md. */
  baseDir?: string;
}

declare const __dirname: string;

function defaultEngine(events: EngineEvents): AnalysisEngine {
  const script = typeof __dirname === 'string' ? join(__dirname, 'lsp-worker.js') : '';
  return script && existsSync(script) ? new WorkerEngine(script, events) : new InProcessEngine(events);
}

let guardsInstalled = false;

/** Keeps the server alive on a stray rejection or exception: logged, never fatal. */
function installGuards(log: (m: string) => void): void {
  if (guardsInstalled) return;
  guardsInstalled = true;
  process.on('unhandledRejection', (reason) => log(`unhandled rejection: ${reason instanceof Error ? reason.stack : String(reason)}`));
  process.on('uncaughtException', (err) => log(`uncaught exception: ${err.stack ?? String(err)}`));
}

export function startServer(connection: Connection = createConnection(ProposedFeatures.all), options: ServerOptions = {}): Connection {
  const documents = new TextDocuments(TextDocument);
  const config = new ConfigStore(connection);
  const docsHref = codesHref(options.baseDir ?? (typeof __dirname === 'string' ? __dirname : process.cwd()));
  const log = (m: string): void => connection.console.error(`Offload Ledger: ${m}`);
  installGuards(log);
  // The project index's state for the status item: files known, and who is indexing.
  const known = new Set<string>();
  let checking = false;
  let lastProject: ProjectStatusParams | undefined;
  const projectStatus = (p: ProjectStatusParams): void => {
    if (lastProject && JSON.stringify(lastProject) === JSON.stringify(p)) return;
    lastProject = p;
    void connection.sendNotification(ProjectStatusNotification.type, p).catch(() => undefined);
  };
  const projectReady = (): void => {
    if (checking) return;
    if (lastProject?.state === 'ready' && lastProject.files === known.size) return;
    projectStatus({ state: 'ready', files: known.size });
  };
  /** The diagnostics an early view published, per document (the final view does not send them again). */
  const earlyDiagnostics = new Map<string, { version: number; json: string }>();
  const engine = options.engine ?? defaultEngine({
    onCrash: (reason) => log(`the analysis worker stopped (${reason}); a new one takes the next job`),
    onStart: (n, threadId) => log(`analysis worker started (#${n}, thread ${threadId})`),
    onIndex: (uri, done, total) => {
      if (!checking) projectStatus({ state: 'indexing', done, total, files: known.size, scope: uri });
    },
    // The first diagnostics of a document while the rest of its project is modelled; the job's
    // own view replaces them (hovers and fixes wait for that one).
    onEarly: (view) => {
      scheduler.noteEarly(view.uri, view.version, view.analysisMilliseconds, view.byParts === true);
      if (documents.get(view.uri)?.version !== view.version || scheduler.latest(view.uri)?.version === view.version) return;
      earlyDiagnostics.set(view.uri, { version: view.version, json: JSON.stringify(view.diagnostics) });
      void connection.sendDiagnostics({ uri: view.uri, version: view.version, diagnostics: view.diagnostics });
    },
  });
  /** The last analysis of each file of a workspace check that is not open (same inputs: not analysed again). */
  const checkCache = new ViewCache(4096);
  let workspaceFolders: string[] = [];
  let foldersChange = false;
  let rootUri: string | undefined;
  let caps = { configuration: false, workDoneProgress: false, codeLensRefresh: false, inlayHintRefresh: false, dynamicConfig: false };
  let lastStatus: StatusParams = { state: 'ready', profile: '', baseline: '' };

  const status = (s: Partial<StatusParams>): void => {
    lastStatus = { ...lastStatus, ...s };
    if (lastStatus.state !== 'error') delete lastStatus.message;
    void connection.sendNotification(StatusNotification.type, lastStatus).catch(() => undefined);
  };

  /** The workspace folder holding a file (relative include folders are read from there), else its own folder. */
  const folderOf = (path: string): string => {
    const folders = (workspaceFolders.length > 0 ? workspaceFolders : rootUri ? [rootUri] : []).map(pathOfUri);
    return folders.filter((f) => path.startsWith(f.endsWith('/') ? f : `${f}/`)).sort((a, b) => b.length - a.length)[0] ?? dirname(path);
  };

  const jobFor = async (uri: string, text: string, version: number, languageId: string | undefined): Promise<AnalysisJob | undefined> => {
    const language = languageOfDocument(uri, languageId);
    if (!language) return undefined;
    const settings: Settings = await config.forDocument(uri);
    const resolved = resolveProfile(settings.profile, settings.measuredHostProfile, undefined, machinesFileFor(workspaceFolders.length > 0 ? workspaceFolders : rootUri ? [rootUri] : []));
    for (const w of resolved.warnings) config.warn(w);
    if (lastStatus.profile !== resolved.label || lastStatus.baseline !== settings.baseline) status({ profile: resolved.label, baseline: settings.baseline });
    const path = pathOfUri(uri);
    const openText = (p: string): string | undefined => documents.all().find((d) => pathOfUri(d.uri) === p)?.getText();
    // The compilation database (setting, or the nearest compile_commands.json): each file's own flags.
    const folder = folderOf(path);
    const user = preprocessOf(settings.preprocessorFlags, folder)!;
    const db = uri.startsWith('file:') ? databaseOf(path, settings.compileCommands, folder, (m) => config.warn(m)) : undefined;
    const neighbours = uri.startsWith('file:') ? projectNeighbours(db, path, language, folder, neighbourSources(path, language, openText), user, openText) : undefined;
    known.add(path);
    for (const n of neighbours ?? []) known.add(n.path);
    return {
      uri, version, text, language,
      path,
      root: folder,
      neighbours,
      bindings: Object.entries(settings.sizeBindings),
      preprocess: preprocessFor(db, path, user),
      profile: resolved.profile,
      baseline: settings.baseline,
      timeLoopVariables: settings.timeLoopVariables.split(/[\s,]+/).filter((v) => /^[A-Za-z_]\w*$/.test(v)),
      view: {
        profileName: resolved.label,
        baseline: settings.baseline,
        severity: settings.severity as Record<string, string>,
        codeLens: settings['codeLens.enabled'],
        inlayHints: settings['inlayHints.enabled'],
        docsHref,
      },
    };
  };

  const scheduler = new Scheduler(engine, {
    makeJob: async (uri) => {
      const doc = documents.get(uri);
      return doc ? jobFor(uri, doc.getText(), doc.version, doc.languageId) : undefined;
    },
    currentVersion: (uri) => documents.get(uri)?.version,
    onView: (view) => {
      for (const e of view.internalErrors) log(`internal error while analysing ${view.planning.path}: ${e}`);
      // The final view's diagnostics are sent unless an early view of the same version sent the same ones.
      const early = earlyDiagnostics.get(view.uri);
      earlyDiagnostics.delete(view.uri);
      if (!early || early.version !== view.version || early.json !== JSON.stringify(view.diagnostics)) {
        void connection.sendDiagnostics({ uri: view.uri, version: view.version, diagnostics: view.diagnostics });
      }
      projectReady();
    },
    onError: (uri, e) => {
      log(`analysis of ${uri} failed: ${e instanceof Error ? e.message.split('\n')[0] : String(e)}`);
      status({ state: 'error', message: `the analysis of ${pathOfUri(uri)} failed; see the output channel` });
    },
    onBusyChange: (busy) => {
      status({ state: busy ? 'analysing' : 'ready' });
      if (!busy) projectReady();
    },
  });

  connection.onInitialize((params: InitializeParams): InitializeResult => {
    const c = params.capabilities;
    caps = {
      configuration: !!c.workspace?.configuration,
      workDoneProgress: !!c.window?.workDoneProgress,
      codeLensRefresh: !!c.workspace?.codeLens?.refreshSupport,
      inlayHintRefresh: !!c.workspace?.inlayHint?.refreshSupport,
      dynamicConfig: !!c.workspace?.didChangeConfiguration?.dynamicRegistration,
    };
    config.supportsConfiguration = caps.configuration;
    config.initial = (params.initializationOptions as { settings?: unknown } | undefined)?.settings;
    workspaceFolders = (params.workspaceFolders ?? []).map((f) => f.uri);
    foldersChange = !!c.workspace?.workspaceFolders;
    rootUri = params.rootUri ?? undefined;
    return {
      capabilities: {
        textDocumentSync: { openClose: true, change: TextDocumentSyncKind.Incremental },
        hoverProvider: true,
        codeLensProvider: { resolveProvider: false },
        inlayHintProvider: true,
        codeActionProvider: { codeActionKinds: ['quickfix'] },
        executeCommandProvider: { commands: [ServerCommands.checkWorkspace] },
        workspace: { workspaceFolders: { supported: true, changeNotifications: true } },
      },
      serverInfo: { name: 'offload-ledger', version: TOOL_VERSION },
    };
  });

  connection.onInitialized(() => {
    if (caps.dynamicConfig) void connection.client.register(DidChangeConfigurationNotification.type, { section: 'offloadLedger' });
    if (foldersChange) {
      connection.workspace.onDidChangeWorkspaceFolders((e) => {
        workspaceFolders = [...workspaceFolders.filter((f) => !e.removed.some((r) => r.uri === f)), ...e.added.map((a) => a.uri)];
      });
    }
    void config.forDocument(undefined).then((s) => {
      const r = resolveProfile(s.profile, s.measuredHostProfile, undefined, machinesFileFor(workspaceFolders.length > 0 ? workspaceFolders : rootUri ? [rootUri] : []));
      for (const w of r.warnings) config.warn(w);
      status({ state: 'ready', profile: r.label, baseline: s.baseline });
    });
  });

  connection.onDidChangeConfiguration((change) => {
    config.invalidate();
    if (!caps.configuration) config.initial = (change.settings as Record<string, unknown> | undefined)?.offloadLedger ?? config.initial;
    for (const d of documents.all()) scheduler.schedule(d.uri, 0);
    if (caps.codeLensRefresh) void connection.sendRequest(CodeLensRefreshRequest.type).catch(() => undefined);
    if (caps.inlayHintRefresh) void connection.languages.inlayHint.refresh().catch(() => undefined);
  });

  // TextDocuments reports an open as a content change too: that one is no edit (it must not make
  // the open's analysis stale nor count as a keystroke).
  const opened = new Map<string, number>();
  documents.onDidOpen((e) => {
    opened.set(e.document.uri, e.document.version);
    scheduler.schedule(e.document.uri, 0, false, e.document.lineCount);
  });
  documents.onDidChangeContent(async (e) => {
    if (e.document.version === scheduler.latest(e.document.uri)?.version) return;
    if (opened.get(e.document.uri) === e.document.version) return;
    const s = await config.forDocument(e.document.uri);
    scheduler.schedule(e.document.uri, s.debounceMs, true, e.document.lineCount);
  });
  documents.onDidClose((e) => {
    opened.delete(e.document.uri);
    earlyDiagnostics.delete(e.document.uri);
    scheduler.forget(e.document.uri);
    void connection.sendDiagnostics({ uri: e.document.uri, diagnostics: [] });
  });

  const cancelHook = (token: { onCancellationRequested: (cb: () => void) => unknown }) => (cb: () => void) => {
    token.onCancellationRequested(cb);
  };

  connection.onHover(async (p, token) => {
    const view = await scheduler.viewFor(p.textDocument.uri, cancelHook(token));
    return view ? hoverAt(view, p.position) : null;
  });
  connection.onCodeLens(async (p, token) => (await scheduler.viewFor(p.textDocument.uri, cancelHook(token)))?.lenses ?? []);
  connection.languages.inlayHint.on(async (p, token) => {
    const view = await scheduler.viewFor(p.textDocument.uri, cancelHook(token));
    if (!view) return [];
    return view.inlayHints.filter((h) => h.position.line >= p.range.start.line && h.position.line <= p.range.end.line);
  });
  connection.onCodeAction(async (p, token) => {
    const view = await scheduler.viewFor(p.textDocument.uri, cancelHook(token));
    return view ? codeActionsFor(view, p) : [];
  });

  connection.onRequest(PlanningDataRequest.type, async (p): Promise<PlanningData> => {
    const views = p.uri ? [await scheduler.viewFor(p.uri)].filter((v) => !!v) : scheduler.allViews();
    return {
      profile: lastStatus.profile,
      baseline: lastStatus.baseline,
      estimatesAvailable: views.some((v) => v!.estimatesAvailable),
      files: views.map((v) => v!.planning),
    };
  });

  connection.onRequest(DebugStatsRequest.type, () => ({ engine: engine.stats(), viewCacheHits: scheduler.cache.hits, checkCacheHits: checkCache.hits }));

  connection.onExecuteCommand(async (p, token, reporter) => {
    if (p.command !== ServerCommands.checkWorkspace) return undefined;
    // The client's own token when it sent one (vscode-languageserver then passes a reporter bound
    // to it and removes the token from the params); else server-initiated progress when supported.
    const clientToken = (reporter as unknown as { _token?: unknown })._token !== undefined;
    const progress = !clientToken && caps.workDoneProgress ? await connection.window.createWorkDoneProgress() : reporter;
    const folders = workspaceFolders.length > 0 ? workspaceFolders : rootUri ? [rootUri] : [];
    checking = true;
    try {
      return await checkWorkspace(
        folders,
        {
          openText: (uri) => {
            const d = documents.get(uri);
            return d ? { text: d.getText(), version: d.version } : undefined;
          },
          analyse: async (uri, path, text, version) => {
            if (documents.get(uri)) {
              const v = await scheduler.viewFor(uri);
              if (!v) throw new Error('analysis failed');
              return v.diagnostics;
            }
            const job = await jobFor(uri, text, version, undefined);
            if (!job) return [];
            job.path = path;
            job.firstViews = false;
            const cached = checkCache.lookup(job);
            if (cached) return cached.diagnostics;
            const view = await engine.analyze(job);
            // Diagnostics are all a check reads: the rest of the view is not kept.
            checkCache.store(job, { ...view, hovers: {}, cards: [], lenses: [], inlayHints: [], actions: [], refactors: [] });
            return view.diagnostics;
          },
          publish: (uri, diagnostics) => void connection.sendDiagnostics({ uri, diagnostics }),
          onProgress: (done, total, files) => {
            for (const f of files) known.add(f);
            projectStatus({ state: 'indexing', done, total, files: known.size, scope: 'workspace' });
          },
        },
        progress,
        token,
      );
    } finally {
      checking = false;
      projectStatus({ state: 'ready', files: known.size });
    }
  });

  connection.onShutdown(async () => {
    scheduler.dispose();
    await engine.dispose();
  });

  documents.listen(connection);
  connection.listen();
  return connection;
}

/** The workspace machines file of the first folder, as a path (the CLI reads the same file). */
function machinesFileFor(folders: string[]): string | undefined {
  const first = folders[0];
  if (!first || !first.startsWith('file:')) return undefined;
  return join(fileURLToPath(first), MACHINES_FILE);
}

/** The preprocessor part of a job from the `preprocessorFlags` setting. */
function preprocessOf(flags: string, base: string): AnalysisJob['preprocess'] {
  const f = readCompilerFlags(splitCommandLine(flags));
  return { defines: f.defines, undefines: f.undefines, includeDirs: f.includeDirs.map((d) => (isAbsolute(d) ? d : join(base, d))), directives: f.directives };
}
