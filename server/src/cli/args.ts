/** Command-line arguments of `offload-ledger`, parsed with node:util's parseArgs. */
import { parseArgs } from 'node:util';
import { splitCommandLine } from '../core/preprocessor/flags';

export interface CommonArgs {
  format: 'text' | 'json' | 'sarif' | 'html';
  bindings: Map<string, number>;
  /** `-D NAME[=VALUE]`, `-U NAME`, `-I DIR`, `--directives openacc|openmp|both`. */
  defines: Map<string, string>;
  undefines: string[];
  includeDirs: string[];
  directives?: 'openacc' | 'openmp' | 'both';
  profile?: string;
  /** Undefined: each file's own (one core for serial code, the node for parallel code). */
  baseline?: 'node' | 'core';
  machines?: string;
  /** `--time-loop VAR`: loop variables (or step counters) that name time loops. */
  timeLoopVariables: string[];
  /** `--compile-commands FILE`: the compilation database; default the nearest one above each file. */
  compileCommands?: string;
}

export interface CheckArgs extends CommonArgs {
  command: 'check';
  paths: string[];
}

export interface PlanArgs extends CommonArgs {
  command: 'plan';
  paths: string[];
  runs: number;
  pool?: { hostNodes: number; deviceNodes: number };
}

export interface CalibrateArgs {
  command: 'calibrate';
  /** The C compiler; undefined means the first of gcc, cc, clang on the PATH. */
  cc?: string;
  out?: string;
  maxThreads?: number;
  arrayMiB?: number;
  format: 'text' | 'json';
}

export interface VerifyArgs extends CommonArgs {
  command: 'verify';
  paths: string[];
  /** `--run "ARGS"`: the program's arguments, split as a shell would (no expansion). */
  runArgs: string[];
  /** `--compiler PATH`: the clang to build with (default: the newest /usr/lib/llvm-N/bin/clang, else clang). */
  compiler?: string;
  /** `--timeout SECONDS` for each of the two runs (default 120). */
  timeoutSeconds: number;
}

export interface PortArgs extends CommonArgs {
  command: 'port';
  /** `FILE[:LINE]`: the file, and a line in the time loop to port (default: every time loop that runs on the host). */
  file: string;
  line?: number;
  /** `--model openacc|openmp` (default: the file's own model, else OpenACC). */
  model?: 'openacc' | 'openmp';
  write: boolean;
}

export type CliArgs = CheckArgs | PlanArgs | VerifyArgs | PortArgs | CalibrateArgs | { command: 'help' } | { command: 'version' } | { command: 'serve' };

export class UsageError extends Error {}

export const USAGE = `usage: offload-ledger <command> [options]

commands:
  check [files|dirs]       loop costs, bytes across the link per time step, stale data, suggested data regions
  plan [files|dirs]        throughput and cost of many independent runs (--runs N, --pool host=H,device=D)
  calibrate                measure this machine's memory bandwidth and write a host profile
  verify FILE…             build the program with separate host and device memories (clang's OpenMP
                           offloading to the host), run it, and show the bytes each construct moved beside
                           the ledger's, and whether the results differ from a shared-memory build
  port FILE[:LINE]         write the port of code that runs on the host: directives for every loop nest it
                           proves parallel, the data region and the updates host code needs; prints a diff
                           (--write applies it; --model openacc|openmp)
  translate FILE --to M    rewrite the directives for the other model (openmp or openacc); prints a diff,
                           --write applies it
  serve --stdio            run the language server (also --node-ipc, --socket=N)

options:
  --format text|json|sarif|html  output (default text; json follows the published report schema; sarif is
                           SARIF 2.1.0; html is the planning report with charts, one self-contained page)
  --bind NAME=VALUE        give a size symbol a value, e.g. --bind NX=600 (repeatable)
  --time-loop VAR          take the loops whose variable or step counter is VAR as time loops (repeatable;
                           one loop: a comment "offload-ledger: time-loop" on the line before it)
  -D, --define NAME[=VAL]  define a preprocessor macro for the analysis, as the compiler's -D (repeatable)
  -U, --undefine NAME      undefine a macro, also a predefined one such as _OPENMP (repeatable)
  -I, --include-dir DIR    search DIR for #include "..." headers after the file's own folder (repeatable)
  --directives MODEL       which offload model is compiled: openacc (predefines _OPENACC=202211), openmp
                           (_OPENMP=202111) or both; default: the model of the directives in each file
  --compile-commands FILE  compilation database whose -D/-U/-I/-fopenacc/-fopenmp/-std= flags each file is
                           read with (default: the nearest compile_commands.json above each file, or in a
                           build/ folder beside it); with no files given, the files it lists are checked
  --profile NAME           machine profile for the estimates (built-in presets or offload-ledger.machines.json)
  --baseline node|core     host baseline of the speedups: the whole node or one core (default: one core for
                           serial code, the whole node for code that already runs in parallel or offloads)
  --machines FILE          machines file (default ./offload-ledger.machines.json when present)
  --runs N                 plan: number of independent runs
  --pool host=H,device=D   plan: a mixed pool of H host nodes and D device nodes
  --cc PATH                calibrate: C compiler with OpenMP (default: gcc, cc or clang from the PATH; --compiler is the same)
  --out FILE               calibrate: machines file to write the measured profile into
  --max-threads N          calibrate: measure 1..N threads (default: all cores)
  --run "ARGS"             verify: the program's arguments
  --compiler PATH          verify: the clang to build with (default: the newest /usr/lib/llvm-N/bin/clang)
  --timeout SECONDS        verify: time limit of each run (default 120)
  --help, --version

exit status: 0 no error findings, 1 error findings, 2 usage or input errors`;

const positiveInt = (v: string | undefined, name: string): number | undefined => {
  if (v === undefined) return undefined;
  if (!/^\d+$/.test(v) || Number(v) < 1) throw new UsageError(`${name} expects a positive integer, got \`${v}\``);
  return Number(v);
};

export function parseCli(argv: string[]): CliArgs {
  let parsed;
  try {
    parsed = parseArgs({
      args: argv,
      allowPositionals: true,
      options: {
        format: { type: 'string', short: 'f' },
        bind: { type: 'string', short: 'b', multiple: true },
        'time-loop': { type: 'string', multiple: true },
        define: { type: 'string', short: 'D', multiple: true },
        undefine: { type: 'string', short: 'U', multiple: true },
        'include-dir': { type: 'string', short: 'I', multiple: true },
        directives: { type: 'string' },
        'compile-commands': { type: 'string' },
        profile: { type: 'string' },
        baseline: { type: 'string' },
        machines: { type: 'string' },
        runs: { type: 'string' },
        pool: { type: 'string' },
        cc: { type: 'string' },
        compiler: { type: 'string' },
        out: { type: 'string' },
        'max-threads': { type: 'string' },
        run: { type: 'string' },
        model: { type: 'string' },
        write: { type: 'boolean' },
        timeout: { type: 'string' },
        'array-mib': { type: 'string' },
        stdio: { type: 'boolean' },
        'node-ipc': { type: 'boolean' },
        help: { type: 'boolean', short: 'h' },
        version: { type: 'boolean', short: 'v' },
      },
    });
  } catch (err) {
    throw new UsageError(err instanceof Error ? err.message : String(err));
  }
  const { values, positionals } = parsed;
  if (values.help) return { command: 'help' };
  if (values.version) return { command: 'version' };
  const [command, ...paths] = positionals;
  if (!command) throw new UsageError('missing command; try `offload-ledger check <files>`');
  const format = values.format ?? 'text';
  if (!['text', 'json', 'sarif', 'html'].includes(format)) throw new UsageError(`unknown format \`${format}\`; use text, json, sarif or html`);
  if (command === 'serve') return { command: 'serve' };
  if (command === 'calibrate') {
    return {
      command: 'calibrate', cc: values.cc ?? values.compiler, out: values.out, format: format === 'json' ? 'json' : 'text',
      maxThreads: positiveInt(values['max-threads'], '--max-threads'), arrayMiB: positiveInt(values['array-mib'], '--array-mib'),
    };
  }
  if (command !== 'check' && command !== 'plan' && command !== 'verify' && command !== 'port') throw new UsageError(`unknown command \`${command}\`; the commands are: check, plan, port, verify, translate, calibrate, serve`);
  // No paths: the files of the compilation database (main.ts says so when there is none).
  const bindings = new Map<string, number>();
  for (const b of values.bind ?? []) {
    const m = /^\s*([A-Za-z_][\w.%>-]*)\s*=\s*(-?\d+)\s*$/.exec(b);
    if (!m) throw new UsageError(`--bind expects NAME=INTEGER, got \`${b}\``);
    bindings.set(m[1], Number(m[2]));
  }
  const baseline = values.baseline;
  if (baseline !== undefined && baseline !== 'node' && baseline !== 'core') throw new UsageError(`unknown baseline \`${baseline}\`; use node or core`);
  const defines = new Map<string, string>();
  for (const d of values.define ?? []) {
    const m = /^\s*([A-Za-z_]\w*)\s*(?:=(.*))?$/s.exec(d);
    if (!m) throw new UsageError(`--define expects NAME or NAME=VALUE, got \`${d}\``);
    defines.set(m[1], m[2] ?? '1');
  }
  const undefines = (values.undefine ?? []).map((u) => {
    if (!/^[A-Za-z_]\w*$/.test(u.trim())) throw new UsageError(`--undefine expects a macro name, got \`${u}\``);
    return u.trim();
  });
  const directives = values.directives;
  if (directives !== undefined && !['openacc', 'openmp', 'both'].includes(directives)) throw new UsageError(`unknown directive model \`${directives}\`; use openacc, openmp or both`);
  const timeLoopVariables = (values['time-loop'] ?? []).flatMap((v) => v.split(',')).map((v) => v.trim()).filter((v) => v !== '');
  for (const v of timeLoopVariables) if (!/^[A-Za-z_]\w*$/.test(v)) throw new UsageError(`--time-loop expects a variable name, got \`${v}\``);
  const common: CommonArgs = {
    format: format as CommonArgs['format'], bindings, profile: values.profile, baseline, machines: values.machines,
    defines, undefines, includeDirs: values['include-dir'] ?? [], directives: directives as CommonArgs['directives'], timeLoopVariables,
    ...(values['compile-commands'] !== undefined ? { compileCommands: values['compile-commands'] } : {}),
  };
  if (command === 'check') return { command, paths, ...common };
  if (command === 'port') {
    if (paths.length !== 1) throw new UsageError('port takes one file, optionally with a line: `offload-ledger port heat.c:42`');
    const m = /^(.*?)(?::(\d+))?$/.exec(paths[0])!;
    const model = values.model;
    if (model !== undefined && model !== 'openacc' && model !== 'openmp') throw new UsageError(`unknown model \`${model}\`; use openacc or openmp`);
    return { command, ...common, file: m[1], ...(m[2] ? { line: Number(m[2]) } : {}), ...(model ? { model } : {}), write: values.write ?? false };
  }
  if (command === 'verify') {
    if (format !== 'text' && format !== 'json') throw new UsageError('verify prints text or json');
    return {
      command, paths, ...common, runArgs: values.run !== undefined ? splitCommandLine(values.run) : [],
      compiler: values.compiler ?? values.cc, timeoutSeconds: positiveInt(values.timeout, '--timeout') ?? 120,
    };
  }
  const runs = positiveInt(values.runs, '--runs') ?? 1;
  let pool: PlanArgs['pool'];
  if (values.pool !== undefined) {
    const m = /^\s*host=(\d+)\s*,\s*device=(\d+)\s*$/.exec(values.pool);
    if (!m) throw new UsageError(`--pool expects host=H,device=D, got \`${values.pool}\``);
    pool = { hostNodes: Number(m[1]), deviceNodes: Number(m[2]) };
  }
  return { command, paths, runs, pool, ...common };
}
