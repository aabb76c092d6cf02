/**
 * The one settings schema of Offload Ledger. The language server validates
 * `workspace/configuration` answers against it, and the extension's package.json
 * `contributes.configuration` is generated from it (`npm run manifest`), so the two never drift:
 * `tests/settings.test.ts` fails when they differ.
 *
 * Entries are JSON Schema fragments in the subset VS Code's settings editor understands, plus
 * `usedBy`, which says whether the server or only the client reads the value.
 */
import { DEFAULT_PROFILE, PRESETS } from '../core/machine/profiles';
import { FINDING_CODES } from './codes';

export type SettingScope = 'application' | 'machine' | 'machine-overridable' | 'window' | 'resource';

export interface ValueSchema {
  type: 'string' | 'boolean' | 'integer' | 'object';
  enum?: readonly string[];
  minimum?: number;
  maximum?: number;
  /** For objects: the schema of each value, and a pattern each key must match. */
  additionalProperties?: ValueSchema | false;
  properties?: Record<string, ValueSchema>;
  propertyNames?: { pattern: string };
}

export interface SettingSpec extends ValueSchema {
  default: unknown;
  markdownDescription: string;
  scope: SettingScope;
  enumDescriptions?: readonly string[];
  usedBy: 'server' | 'client';
}

export const SECTION = 'offloadLedger';

const SEVERITY_VALUES = ['error', 'warning', 'info', 'hint', 'off'] as const;

/** Keys are relative to the `offloadLedger` section; package.json shows them with the prefix. */
export const SETTINGS = {
  profile: {
    // Not an enum: a workspace's offload-ledger.machines.json adds profiles of its own.
    type: 'string',
    default: DEFAULT_PROFILE,
    scope: 'window',
    usedBy: 'server',
    markdownDescription: `Machine profile (host, device and link) the estimates assume: a built-in profile (${Object.keys(PRESETS).map((p) => `\`${p}\``).join(', ')}, named by technology class) or a profile from the workspace's \`offload-ledger.machines.json\`. \`Offload Ledger: Measure This Machine\` replaces the host part with measured figures.`,
  },
  baseline: {
    type: 'string',
    enum: ['auto', 'node', 'core'],
    enumDescriptions: ['One host core for serial code, the whole node for code that already runs in parallel or offloads.', 'Compare one device with the whole host node (all cores).', 'Compare one device with one host core (one run per core, as in parameter sweeps).'],
    default: 'auto',
    scope: 'window',
    usedBy: 'server',
    markdownDescription: 'What the speedup is measured against: the whole host node or one host core.',
  },
  sizeBindings: {
    type: 'object',
    additionalProperties: { type: 'integer' },
    propertyNames: { pattern: '^[A-Za-z_][\\w.%>-]*$' },
    default: {},
    scope: 'resource',
    usedBy: 'server',
    markdownDescription: 'Values for size symbols the sources leave open, e.g. `{ "NX": 600, "NY": 400 }` (the same as `--bind NX=600` on the command line). They override the values found in the file.',
  },
  preprocessorFlags: {
    type: 'string',
    default: '',
    scope: 'resource',
    usedBy: 'server',
    markdownDescription: 'Compiler flags the analysis preprocesses with, written as on the compiler\'s command line: `-DNAME[=VALUE]`, `-UNAME`, `-I DIR` (relative to the workspace folder) and `-fopenacc` / `-fopenmp` to choose which of `_OPENACC` (202211) and `_OPENMP` (202111) is predefined; e.g. `-DUSE_GPU -DNX=512 -I include -fopenacc`. Without a model flag, each file is read in the model of its own directives. Other flags are ignored. (The command line\'s `--define`, `--undefine`, `--include-dir` and `--directives` do the same.)',
  },
  compileCommands: {
    type: 'string',
    default: '',
    scope: 'resource',
    usedBy: 'server',
    markdownDescription: 'Path of the compilation database (`compile_commands.json`, as CMake, Meson or Bear write it), absolute or relative to the workspace folder. Each file is read with the `-D`/`-U`, `-I`/`-iquote`/`-isystem`, `-fopenacc`/`-fopenmp` and `-std=` flags of its own entry, under `preprocessorFlags`, and a time loop\'s calls are followed into the other files the database lists. Empty: the nearest `compile_commands.json` above each file, or in a `build/` folder beside one, is used. Nothing in the database is ever run. (The command line\'s `--compile-commands FILE` does the same.)',
  },
  timeLoopVariables: {
    type: 'string',
    default: '',
    scope: 'resource',
    usedBy: 'server',
    markdownDescription: 'Loop variables that name time loops, separated by spaces or commas, e.g. `iter it` (the same as `--time-loop iter --time-loop it` on the command line). A loop whose variable (or step counter, for a `while` loop) is named here is taken as a time loop even when the analysis would not find it. A comment `// offload-ledger: time-loop` (Fortran `! offload-ledger: time-loop`) on the line before a loop marks that one loop.',
  },
  severity: {
    type: 'object',
    properties: Object.fromEntries(FINDING_CODES.map((c) => [c, { type: 'string', enum: SEVERITY_VALUES }])),
    additionalProperties: false,
    default: {},
    scope: 'resource',
    usedBy: 'server',
    markdownDescription: 'Severity per finding code (`error`, `warning`, `info`, `hint`, or `off` to hide it), e.g. `{ "already-present": "hint" }`. Codes not listed keep their default from docs/findings.md.',
  },
  'codeLens.enabled': {
    type: 'boolean',
    default: true,
    scope: 'window',
    usedBy: 'server',
    markdownDescription: 'Show the per-step ledger above each time loop (bytes to the device and to the host, estimated speedup).',
  },
  'inlayHints.enabled': {
    type: 'boolean',
    default: false,
    scope: 'window',
    usedBy: 'server',
    markdownDescription: 'Show the bytes each data directive moves per time step at the end of its line.',
  },
  debounceMs: {
    type: 'integer',
    minimum: 0,
    maximum: 10000,
    default: 100,
    scope: 'window',
    usedBy: 'server',
    markdownDescription: 'Milliseconds of quiet after an edit before the file is analysed again. While you type within lines and each keystroke is analysed faster than you type, each keystroke is analysed at once. An edit during an analysis makes that analysis stale (its result is dropped and the analysis thread, with its caches, stays warm), so a short wait costs little.',
  },
  measuredHostProfile: {
    type: 'string',
    default: '',
    scope: 'machine',
    usedBy: 'server',
    markdownDescription: 'Path of a host profile written by `offload-ledger calibrate --out <file>` (set by `Offload Ledger: Measure This Machine`). When set, it replaces the host part of the chosen profile.',
  },
  'calibrate.compiler': {
    type: 'string',
    default: '',
    scope: 'machine',
    usedBy: 'client',
    markdownDescription: 'C compiler that `Offload Ledger: Measure This Machine` uses to build its measurement kernels. Empty: the tool looks for one on the PATH.',
  },
  'verify.compiler': {
    type: 'string',
    default: '',
    scope: 'machine',
    usedBy: 'client',
    markdownDescription: 'clang that `Offload Ledger: Measure Transfers With Separate Memory` builds the program with, for OpenMP offloading to the host (needs `libomp-dev` and `clang-tools-14` on Debian). Empty: the newest `/usr/lib/llvm-N/bin/clang`, else `clang` on the PATH.',
  },
  'verify.runArguments': {
    type: 'string',
    default: '',
    scope: 'resource',
    usedBy: 'client',
    markdownDescription: 'Arguments the program gets when `Offload Ledger: Measure Transfers With Separate Memory` runs it (as `offload-ledger verify --run`). Sizes they set should also be given in `sizeBindings`, so the prediction matches the run.',
  },
  'trace.server': {
    type: 'string',
    enum: ['off', 'messages', 'verbose'],
    default: 'off',
    scope: 'window',
    usedBy: 'client',
    markdownDescription: 'Log the messages between VS Code and the Offload Ledger language server in its output channel.',
  },
} as const satisfies Record<string, SettingSpec>;

export type SettingKey = keyof typeof SETTINGS;

/** The `contributes.configuration` block of package.json, derived from the schema. */
export function contributedConfiguration(): { title: string; properties: Record<string, unknown> } {
  const properties: Record<string, unknown> = {};
  for (const [key, spec] of Object.entries(SETTINGS) as [string, SettingSpec][]) {
    const { usedBy: _usedBy, ...rest } = spec;
    properties[`${SECTION}.${key}`] = rest;
  }
  return { title: 'Offload Ledger', properties };
}
