/**
 * `offload-ledger verify FILE…`: measures what the ledger predicts. The program is built with
 * clang for LLVM's OpenMP offloading with the host itself as the target device
 * (`-fopenmp-targets=x86_64-pc-linux-gnu`), and run twice: with offloading mandatory, where the
 * runtime (libomptarget) keeps separate device copies and logs every copy with its size and
 * source line (`LIBOMPTARGET_INFO=-1`); and with offloading disabled, where target regions run in
 * the host's own memory. The first run's log gives the bytes per construct and per time step
 * beside the ledger's; the two runs' outputs, compared, say whether the program depends on data
 * that is stale on one side (a missing update shows only with separate memories, as on a GPU).
 *
 * OpenACC programs are translated to OpenMP first (clang has no OpenACC), and the report says so.
 * Nothing the user wrote is changed: builds and translations live in a temporary folder.
 */
import { spawn, spawnSync } from 'node:child_process';
import { existsSync, mkdtempSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { basename, delimiter, dirname, extname, join, resolve } from 'node:path';
import { createInterface } from 'node:readline';
import { analyzeSource, buildModel, type FileAnalysis } from '../core/analyze';
import { compareRun, type Comparison, type ConstructComparison } from '../core/verify/compare';
import { MapLogReader, type MapLog } from '../core/verify/mapLog';
import { compareOutputs } from '../core/verify/outputs';
import { formatBytes } from '../core/symbolic';
import { translateDirectives } from '../core/translate';
import { loadGrammars } from '../grammars';
import type { VerifyArgs } from './args';
import { InputError, readHeader, readSource, type SourceFile } from '../host/files';

/** The runtime version the log reader was written against (see core/verify/mapLog.ts). */
export const RUNTIME_READ = 'libomptarget of LLVM 14.0.6 (Debian 12)';

export const INSTALL_HINT =
  'verify needs clang with OpenMP offloading to the host (clang, libomp-dev and clang-offload-wrapper): on Debian/Ubuntu `apt-get install clang libomp-dev clang-tools-14`, then put /usr/lib/llvm-14/bin first on the PATH (or give --compiler /usr/lib/llvm-14/bin/clang)';

const TARGET = 'x86_64-pc-linux-gnu';

export interface RunResult {
  status: number | null;
  signal: string | null;
  timedOut: boolean;
  stdout: string;
  /** Standard error without the runtime's log lines. */
  stderr: string;
}

export interface VerifyReport {
  files: { path: string; translated: boolean; notes: string[] }[];
  compiler: string;
  runtime: string;
  separate: RunResult & { log: MapLog };
  shared: RunResult | null;
  /** Whether the two builds printed the same (null when one did not finish). */
  sameOutput: boolean | null;
  firstDifference?: { line: number; separate: string; shared: string };
  /** Output lines not compared because they are timings (1-based). */
  ignoredLines: number[];
  comparison: Comparison;
  notes: string[];
}

/** The clang to use and the folder of its offload tools, or a clear message why there is none. */
export function findToolchain(given: string | undefined): { clang: string; clangxx: string; pathPrefix: string } | { error: string } {
  const candidates: string[] = [];
  if (given) candidates.push(given);
  else {
    const llvm = existsSync('/usr/lib') ? readdirSync('/usr/lib').filter((d) => /^llvm-\d+$/.test(d)).sort((a, b) => Number(b.slice(5)) - Number(a.slice(5))) : [];
    for (const d of llvm) candidates.push(`/usr/lib/${d}/bin/clang`);
    candidates.push('clang');
  }
  for (const c of candidates) {
    const v = spawnSync(c, ['--version'], { encoding: 'utf8' });
    if (v.status !== 0) continue;
    const dir = c.includes('/') ? dirname(c) : '';
    const clangxx = c.includes('/') ? join(dir, basename(c).replace(/^clang/, 'clang++')) : c.replace(/^clang/, 'clang++');
    return { clang: c, clangxx, pathPrefix: dir };
  }
  return { error: given ? `the compiler \`${given}\` does not run; ${INSTALL_HINT}` : `no clang found; ${INSTALL_HINT}` };
}

function envWith(pathPrefix: string, extra: Record<string, string> = {}): NodeJS.ProcessEnv {
  const env = { ...process.env, ...extra };
  if (pathPrefix) env.PATH = `${pathPrefix}${delimiter}${env.PATH ?? ''}`;
  return env;
}

/** Compiles; returns the compiler's messages on failure. */
function compile(cc: string, pathPrefix: string, args: string[]): string | undefined {
  const r = spawnSync(cc, args, { encoding: 'utf8', env: envWith(pathPrefix), timeout: 300_000 });
  if (r.error) return String(r.error.message);
  if (r.status !== 0) return (r.stderr || r.stdout || `exit status ${r.status}`).trim();
  return undefined;
}

/** Runs a program with a time limit, streaming stderr through `onErr` (the log can be huge). */
function runProgram(exe: string, argv: string[], env: NodeJS.ProcessEnv, timeoutMs: number, onErr?: (line: string) => boolean): Promise<RunResult> {
  return new Promise((resolveRun) => {
    const child = spawn(exe, argv, { env, stdio: ['ignore', 'pipe', 'pipe'] });
    let stdout = '';
    const errLines: string[] = [];
    let timedOut = false;
    const timer = setTimeout(() => { timedOut = true; child.kill('SIGKILL'); }, timeoutMs);
    child.stdout.setEncoding('utf8');
    child.stdout.on('data', (d: string) => { if (stdout.length < 16 << 20) stdout += d; });
    const rl = createInterface({ input: child.stderr });
    rl.on('line', (l) => { if (!(onErr?.(l)) && errLines.length < 2000) errLines.push(l); });
    let closed = 0;
    let exit: { code: number | null; signal: NodeJS.Signals | null } = { code: null, signal: null };
    const done = (): void => {
      if (++closed < 2) return;
      clearTimeout(timer);
      resolveRun({ status: exit.code, signal: exit.signal, timedOut, stdout, stderr: errLines.join('\n') });
    };
    rl.on('close', done);
    child.on('error', (e) => { errLines.push(String(e.message)); exit = { code: 127, signal: null }; closed = 1; done(); });
    child.on('close', (code, signal) => { exit = { code, signal }; done(); });
  });
}

const LANG_OF: Record<string, 'c' | 'cpp' | undefined> = { '.c': 'c', '.cc': 'cpp', '.cpp': 'cpp', '.cxx': 'cpp', '.c++': 'cpp', '.C': 'cpp' };

/** The OpenACC → OpenMP translation verify builds OpenACC programs through (core/translate). */
export type Translator = (text: string, language: 'c' | 'cpp', to: 'openmp') => {
  text: string; changed: number; notes: { line: number; message: string }[];
  /** For each line of `text`, the 0-based original line it came from. */
  lineOrigin: number[];
};

export async function verify(args: VerifyArgs, note: (s: string) => void, translate?: Translator): Promise<VerifyReport> {
  if (args.paths.length === 0) throw new InputError('`verify` needs the source files of one program (the file with main and the files it calls)');
  const sources: SourceFile[] = args.paths.map((p) => readSource(resolve(p)));
  for (const s of sources) {
    if (s.language === 'fortran') {
      throw new InputError(`${s.path}: clang has no Fortran here, so verify builds C and C++ only; Fortran ports are checked by compiling and running with gfortran`);
    }
  }
  const tc = findToolchain(args.compiler);
  if ('error' in tc) throw new InputError(tc.error);
  const work = mkdtempSync(join(tmpdir(), 'offload-ledger-verify-'));
  try {
    return await verifyIn(work, sources, tc, args, note, translate);
  } finally {
    rmSync(work, { recursive: true, force: true });
  }
}

async function verifyIn(
  work: string, sources: SourceFile[], tc: { clang: string; clangxx: string; pathPrefix: string }, args: VerifyArgs, note: (s: string) => void, translate?: Translator,
): Promise<VerifyReport> {
  const deps = { ...(await loadGrammars()), readInclude: readHeader };
  const notes: string[] = [];
  const settings = { defines: args.defines, undefines: args.undefines, includeDirs: args.includeDirs, directives: args.directives };
  // OpenACC files become OpenMP files in the work folder, under their own names so the
  // runtime's file:line refers to the same name.
  const built: { path: string; text: string; translated: boolean; notes: string[]; language: 'c' | 'cpp'; lineMap?: (n: number) => number }[] = [];
  for (const s of sources) {
    const language = s.language === 'cpp' ? 'cpp' : (LANG_OF[extname(s.path)] ?? 'c');
    const model = buildModel(s, deps, settings);
    const families = new Set(model.directives.map((d) => d.family));
    let text = s.text;
    let translated = false;
    let lineMap: ((n: number) => number) | undefined;
    const tNotes: string[] = [];
    if (families.has('openacc')) {
      const t = (translate ?? translateDirectives)(s.text, language, 'openmp');
      text = t.text;
      translated = t.changed > 0;
      lineMap = (n: number): number => (t.lineOrigin[n - 1] ?? n - 1) + 1;
      for (const n of t.notes) tNotes.push(`${basename(s.path)}:${n.line + 1}: ${n.message}`);
      if (translated) notes.push(`${basename(s.path)} uses OpenACC: it was translated to OpenMP (offload-ledger translate --to openmp) and the translation was built and measured`);
    }
    const out = join(work, basename(s.path));
    writeFileSync(out, text);
    built.push({ path: out, text, translated, notes: tNotes, language, lineMap });
  }
  // The ledger of what is built (the translation keeps every line where it was).
  const files = built.map((b, k) => ({ ...sources[k], path: b.path, text: b.text }));
  const models = files.map((f) => buildModel(f, deps, { ...settings, directives: 'openmp' as const, includeDirs: [...args.includeDirs, ...sources.map((s) => dirname(s.path))] }));
  const analyses: FileAnalysis[] = files.map((f, k) => analyzeSource({ ...f, model: models[k] }, deps, { ...settings, bindings: args.bindings, programRun: true, workspace: models.length > 1 ? models : undefined, timeLoopVariables: args.timeLoopVariables }));
  for (const a of analyses) for (const ie of a.internalErrors) note(`internal error while analysing ${basename(a.path)}: ${ie.split('\n')[0]}`);
  if (args.runArgs.length > 0 && analyses.some((a) => a.model.procedures.some((p) => (p.assumptions ?? []).some((n) => /argument|environment/.test(n))))) {
    notes.push('the ledger assumed the sizes a run without arguments uses; give the sizes your --run arguments set with --bind NAME=VALUE so the prediction matches the run');
  }

  const anyCpp = built.some((b) => b.language === 'cpp');
  const cc = anyCpp ? tc.clangxx : tc.clang;
  const flags = [
    ...[...args.defines].map(([k, v]) => `-D${k}=${v}`), ...args.undefines.map((u) => `-U${u}`),
    ...[...args.includeDirs, ...sources.map((s) => dirname(s.path))].map((d) => `-I${resolve(d)}`),
  ];
  const sep = join(work, 'program');
  const srcs = built.map((b) => b.path);
  const e1 = compile(cc, tc.pathPrefix, ['-O1', '-gline-tables-only', '-fopenmp', `-fopenmp-targets=${TARGET}`, ...flags, ...srcs, '-o', sep, '-lm']);
  if (e1) {
    if (/offload-wrapper|fopenmp-targets|libomptarget|cannot find -lomptarget|unable to execute command/i.test(e1)) throw new InputError(`building for the host-as-device target failed (${e1.split('\n')[0]}); ${INSTALL_HINT}`);
    throw new InputError(`the program does not build with ${cc} -fopenmp -fopenmp-targets=${TARGET}:\n${firstLines(e1, 12)}`);
  }

  const timeoutMs = args.timeoutSeconds * 1000;
  const reader = new MapLogReader();
  const separate = await runProgram(sep, args.runArgs, envWith(tc.pathPrefix, { LIBOMPTARGET_INFO: '-1', OMP_TARGET_OFFLOAD: 'MANDATORY' }), timeoutMs, (l) => {
    if (!l.startsWith('Libomptarget')) return false;
    reader.line(l);
    return !/^Libomptarget (fatal )?error/.test(l);
  });
  const log = reader.result();
  // The same program with offloading switched off runs its target regions in the host's own
  // memory (OpenMP 5.2 §3.4, OMP_TARGET_OFFLOAD=DISABLED): the shared-memory result.
  const shared = await runProgram(sep, args.runArgs, envWith(tc.pathPrefix, { OMP_TARGET_OFFLOAD: 'DISABLED' }), timeoutMs);

  let sameOutput: boolean | null = null;
  let firstDifference: VerifyReport['firstDifference'];
  let ignoredLines: number[] = [];
  if (shared && finished(separate) && finished(shared)) {
    let cmp = compareOutputs(separate.stdout, shared.stdout);
    if (!cmp.same) {
      // Run the shared-memory program once more: lines that change between two runs of the same
      // build are timings, not results.
      const again = await runProgram(sep, args.runArgs, envWith(tc.pathPrefix, { OMP_TARGET_OFFLOAD: 'DISABLED' }), timeoutMs);
      if (finished(again)) cmp = compareOutputs(separate.stdout, shared.stdout, again.stdout);
    }
    sameOutput = cmp.same && separate.status === shared.status;
    ignoredLines = cmp.ignored;
    firstDifference = cmp.firstDifference;
    if (!firstDifference && separate.status !== shared.status) firstDifference = { line: 0, separate: `exit status ${separate.status}`, shared: `exit status ${shared.status}` };
  }
  const comparison = compareRun(analyses, log.constructs);
  // Rows name lines of the built (translated) files; the user reads the originals.
  const mapOf = (file: string): ((n: number) => number) | undefined => built.find((b) => basename(b.path) === basename(file))?.lineMap;
  for (const c of comparison.constructs) c.line = mapOf(c.file)?.(c.line) ?? c.line;
  for (const t of comparison.timeLoops) {
    const m = mapOf(t.file);
    if (!m) continue;
    t.line = m(t.line);
    for (const p of t.periodic) p.line = m(p.line);
  }
  return {
    files: built.map((b) => ({ path: b.path, translated: b.translated, notes: b.notes })).map((f, k) => ({ ...f, path: sources[k].path })),
    compiler: cc, runtime: RUNTIME_READ, separate: { ...separate, log }, shared, sameOutput, firstDifference, ignoredLines, comparison, notes,
  };
}

function finished(r: RunResult): boolean {
  return !r.timedOut && r.signal === null;
}

function firstLines(s: string, n: number): string {
  return s.split('\n').slice(0, n).join('\n');
}

const bytes = formatBytes;

const range = (r: { lo: number; hi: number }): string => (r.lo === r.hi ? bytes(r.lo) : `${bytes(r.lo)}–${bytes(r.hi)}`);

function runState(r: RunResult): string {
  if (r.timedOut) return 'stopped at the time limit';
  if (r.signal) return `killed by ${r.signal}`;
  return `exit status ${r.status}`;
}

/** The report as text: per construct, measured beside predicted, differences marked. */
export function formatVerify(r: VerifyReport, shown: (p: string) => string): string {
  const out: string[] = [];
  out.push(`verify: ${r.files.map((f) => shown(f.path)).join(', ')} built with ${r.compiler} for the host as a separate device (${r.runtime})`);
  for (const n of r.notes) out.push(`  note: ${n}`);
  for (const f of r.files) for (const n of f.notes) out.push(`  translation: ${n}`);
  out.push(`  separate-memory run: ${runState(r.separate)}; shared-memory run: ${r.shared ? runState(r.shared) : 'not built'}`);
  if (r.separate.log.errors.length > 0 || !finished(r.separate) || (r.separate.status ?? 0) !== 0) {
    for (const e of r.separate.log.errors.slice(0, 5)) out.push(`  runtime error: ${e}`);
    if (r.separate.log.lastEntries.length > 0) {
      out.push('  last map entries before the end:');
      for (const l of r.separate.log.lastEntries.slice(-8)) out.push(`    ${l}`);
    }
  }
  const skipped = r.ignoredLines.length > 0 ? ` (${r.ignoredLines.length} line${r.ignoredLines.length === 1 ? '' : 's'} of timings not compared: ${r.ignoredLines.slice(0, 6).join(', ')}${r.ignoredLines.length > 6 ? ', …' : ''})` : '';
  if (r.sameOutput === true) out.push(`  results: both runs print the same output${skipped}`);
  else if (r.sameOutput === false) {
    out.push('  results DIFFER between separate and shared memory: the program depends on data that is stale on one side (see the stale-* findings of `check`)');
    if (r.firstDifference) out.push(`    first different line ${r.firstDifference.line}: separate \`${r.firstDifference.separate}\`, shared \`${r.firstDifference.shared}\`${skipped}`);
  }
  const rows = r.comparison.constructs.filter((c) => c.executions > 0 || c.predicted);
  if (rows.length > 0) {
    const w = Math.max(11, ...rows.map((c) => `${basename(shown(c.file))}:${c.line}`.length));
    out.push(`  ${'construct'.padEnd(w)}  runs    ${'to device: measured / ledger'.padEnd(30)} to host: measured / ledger`);
    for (const c of rows) out.push(`  ${constructLine(c, shown, w)}`);
  } else out.push('  no offload construct ran');
  for (const t of r.comparison.timeLoops) {
    if (!t.measured || !t.predictedEveryStep) {
      out.push(`  time loop at ${basename(t.file)}:${t.line}: steps or sizes unbound, so no per-step comparison (give them with -D or --bind)`);
      continue;
    }
    const mark = t.verdict === 'equal' ? 'equal' : 'DIFFERS';
    out.push(`  time loop at ${basename(t.file)}:${t.line} (${t.steps} step${t.steps === 1 ? '' : 's'}), every step: measured ${bytes(t.measured.toDevice)} to device, ${bytes(t.measured.toHost)} to host; ledger ${bytes(t.predictedEveryStep.toDevice)}, ${bytes(t.predictedEveryStep.toHost)} — ${mark}`);
    for (const p of t.periodic) {
      out.push(`    line ${p.line}: ran in ${p.runs} of ${t.steps} steps and moved ${bytes(p.measured)}; the ledger has ${bytes(p.predictedPerRun)} every ${p.everySteps} steps`);
    }
  }
  const unbound = r.comparison.constructs.filter((c) => c.verdict === 'unbound').length;
  const d = r.comparison.differences;
  const verdict = d > 0 ? `${d} construct${d === 1 ? '' : 's'} moved other bytes than the ledger predicts (marked ≠)`
    : unbound > 0 ? 'no construct moved other bytes than the ledger predicts where it could be compared'
    : 'every construct moved the bytes the ledger predicts';
  const open = unbound > 0 ? `; ${unbound} construct${unbound === 1 ? '' : 's'} (marked ?) could not be compared: a size is unbound, give it with -D or --bind` : '';
  const early = !finished(r.separate) || r.separate.status !== 0;
  out.push(early
    ? `  the run ended early (${runState(r.separate)}), so the figures above cover only the part that ran`
    : `  ${verdict}${open}. Measured with separate memories on this host: the bytes are the standard's data movement, not a GPU's timing.`);
  return out.join('\n');
}

function constructLine(c: ConstructComparison, shown: (p: string) => string, width: number): string {
  const where = `${basename(shown(c.file))}:${c.line}`.padEnd(width);
  const runs = String(c.executions).padStart(5);
  const pd = c.verdict === 'unbound' ? 'unbound' : c.predicted ? range(c.predicted.toDevice) : '—';
  const ph = c.verdict === 'unbound' ? 'unbound' : c.predicted ? range(c.predicted.toHost) : '—';
  const mark = c.verdict === 'equal' ? ' ' : c.verdict === 'unbound' ? '?' : '≠';
  const dev = `${bytes(c.measured.toDevice)} / ${pd}`.padEnd(30);
  const host = `${bytes(c.measured.toHost)} / ${ph}`.padEnd(30);
  const why = c.verdict === 'equal' ? '' : `  ${c.note ?? ''}${c.differing && c.differing.length > 0 ? ` (${c.differing.join(', ')})` : ''}`;
  return `${where} ${runs}  ${mark} ${dev} ${host}${why}`.trimEnd();
}

/** The report as JSON (numbers in bytes). */
export function verifyJson(r: VerifyReport): unknown {
  const run = (x: RunResult | null) => x && ({ status: x.status, signal: x.signal, timedOut: x.timedOut });
  return {
    files: r.files, compiler: r.compiler, runtime: r.runtime, notes: r.notes,
    separate: { ...run(r.separate), runtimeErrors: r.separate.log.errors, lastEntries: r.separate.log.lastEntries },
    shared: run(r.shared), sameOutput: r.sameOutput, firstDifference: r.firstDifference ?? null, ignoredLines: r.ignoredLines,
    constructs: r.comparison.constructs, timeLoops: r.comparison.timeLoops, differences: r.comparison.differences,
  };
}
