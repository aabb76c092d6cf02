/**
 * OpenMP 5.2 constructs and clauses, restricted to what directive-based offload and loop
 * parallelisation of stencil codes use, plus the common synchronisation and tasking directives
 * so that a file using them does not drown in "unknown construct" findings.
 *
 * Combined and composite constructs are generated from leaf constructs, and the clauses allowed
 * on them are the union of the leaves' clauses, which is the general rule of the specification's
 * chapter on construct composition; its few exceptions are left to later passes.
 */
import { buildGrammar, clause, languageOfWords, type ClauseSpec, type ConstructSpec } from './grammar';

const MOTION_MODS = ['present', 'mapper', 'iterator'];

export const OPENMP_CLAUSE_SPECS: readonly ClauseSpec[] = [
  clause('map', 'required', 'map'),
  clause('to', 'required', 'vars', { modifiers: MOTION_MODS }),
  clause('from', 'required', 'vars', { modifiers: MOTION_MODS }),
  clause('defaultmap', 'required', 'value'),
  clause('is_device_ptr', 'required', 'vars'),
  clause('has_device_addr', 'required', 'vars'),
  clause('use_device_ptr', 'required', 'vars'),
  clause('use_device_addr', 'required', 'vars'),
  clause('private', 'required', 'vars'),
  clause('firstprivate', 'required', 'vars'),
  clause('lastprivate', 'required', 'vars', { modifiers: ['conditional'] }),
  clause('shared', 'required', 'vars'),
  clause('copyin', 'required', 'vars'),
  clause('copyprivate', 'required', 'vars'),
  clause('nontemporal', 'required', 'vars'),
  clause('uniform', 'required', 'vars'),
  clause('inclusive', 'required', 'vars'),
  clause('exclusive', 'required', 'vars'),
  clause('enter', 'required', 'vars'),
  clause('link', 'required', 'vars'),
  clause('reduction', 'required', 'reduction'),
  clause('in_reduction', 'required', 'reduction'),
  clause('task_reduction', 'required', 'reduction'),
  clause('linear', 'required', 'suffixed'),
  clause('aligned', 'required', 'suffixed'),
  clause('depend', 'required', 'prefixed'),
  clause('allocate', 'required', 'prefixed'),
  clause('affinity', 'required', 'prefixed'),
  clause('collapse', 'required', 'value', { once: true }),
  clause('ordered', 'optional', 'value', { once: true }),
  clause('nowait', 'none', 'flag'),
  clause('if', 'required', 'value'),
  clause('device', 'required', 'value', { once: true }),
  clause('num_teams', 'required', 'value', { once: true }),
  clause('thread_limit', 'required', 'value', { once: true }),
  clause('num_threads', 'required', 'value', { once: true }),
  clause('schedule', 'required', 'value', { once: true }),
  clause('dist_schedule', 'required', 'value', { once: true }),
  clause('default', 'required', 'value', { values: ['shared', 'none', 'private', 'firstprivate'], once: true }),
  clause('simdlen', 'required', 'value', { once: true }),
  clause('safelen', 'required', 'value', { once: true }),
  clause('order', 'required', 'value', { once: true }),
  clause('bind', 'required', 'value', { once: true }),
  clause('proc_bind', 'required', 'value', { values: ['primary', 'master', 'close', 'spread'], once: true }),
  clause('device_type', 'required', 'value', { values: ['host', 'nohost', 'any'], once: true }),
  clause('indirect', 'optional', 'value'),
  clause('uses_allocators', 'required', 'value'),
  clause('filter', 'required', 'value'),
  clause('hint', 'required', 'value'),
  clause('final', 'required', 'value'),
  clause('priority', 'required', 'value'),
  clause('grainsize', 'required', 'value'),
  clause('num_tasks', 'required', 'value'),
  clause('detach', 'required', 'value'),
  clause('doacross', 'required', 'value'),
  clause('fail', 'required', 'value'),
  clause('untied', 'none', 'flag'),
  clause('mergeable', 'none', 'flag'),
  clause('nogroup', 'none', 'flag'),
  clause('inbranch', 'none', 'flag'),
  clause('notinbranch', 'none', 'flag'),
  clause('threads', 'none', 'flag'),
  clause('simd', 'none', 'flag'),
  // Atomic and memory-order clauses.
  clause('read', 'none', 'flag'),
  clause('write', 'none', 'flag'),
  clause('update', 'none', 'flag'),
  clause('capture', 'none', 'flag'),
  clause('compare', 'none', 'flag'),
  clause('weak', 'none', 'flag'),
  clause('seq_cst', 'none', 'flag'),
  clause('acq_rel', 'none', 'flag'),
  clause('release', 'none', 'flag'),
  clause('acquire', 'none', 'flag'),
  clause('relaxed', 'none', 'flag'),
];

/** Clause sets of the leaf constructs from which the combined forms are composed. */
const LEAF: Record<string, string[]> = {
  parallel: ['if', 'num_threads', 'default', 'private', 'firstprivate', 'shared', 'copyin', 'reduction', 'proc_bind', 'allocate'],
  for: ['private', 'firstprivate', 'lastprivate', 'linear', 'reduction', 'schedule', 'collapse', 'ordered', 'nowait', 'allocate', 'order'],
  simd: ['if', 'safelen', 'simdlen', 'linear', 'aligned', 'nontemporal', 'private', 'lastprivate', 'reduction', 'collapse', 'order'],
  loop: ['bind', 'collapse', 'order', 'private', 'lastprivate', 'reduction'],
  distribute: ['private', 'firstprivate', 'lastprivate', 'collapse', 'dist_schedule', 'allocate', 'order'],
  teams: ['num_teams', 'thread_limit', 'default', 'private', 'firstprivate', 'shared', 'reduction', 'allocate', 'if'],
  target: [
    'if', 'device', 'thread_limit', 'private', 'firstprivate', 'in_reduction', 'map', 'is_device_ptr',
    'has_device_addr', 'defaultmap', 'nowait', 'depend', 'allocate', 'uses_allocators',
  ],
  sections: ['private', 'firstprivate', 'lastprivate', 'reduction', 'allocate', 'nowait'],
  workshare: ['nowait'],
  masked: ['filter'],
  master: [],
  taskloop: [
    'if', 'shared', 'private', 'firstprivate', 'lastprivate', 'reduction', 'in_reduction', 'default', 'grainsize',
    'num_tasks', 'collapse', 'final', 'priority', 'untied', 'mergeable', 'nogroup', 'allocate',
  ],
};
LEAF.do = LEAF.for;

/** Combined forms; `{for}` stands for `for` in C and C++ and for `do` in Fortran. */
const COMBINED = [
  'parallel {for}', 'parallel {for} simd', 'parallel loop', 'parallel sections', 'parallel workshare',
  'parallel masked', 'parallel master', 'parallel masked taskloop', 'parallel masked taskloop simd',
  'parallel master taskloop', 'parallel master taskloop simd', 'masked taskloop', 'masked taskloop simd',
  'master taskloop', 'master taskloop simd', 'taskloop simd', '{for} simd', 'distribute simd',
  'distribute parallel {for}', 'distribute parallel {for} simd', 'teams distribute', 'teams distribute simd',
  'teams distribute parallel {for}', 'teams distribute parallel {for} simd', 'teams loop', 'target parallel',
  'target parallel {for}', 'target parallel {for} simd', 'target parallel loop', 'target simd', 'target teams',
  'target teams distribute', 'target teams distribute simd', 'target teams distribute parallel {for}',
  'target teams distribute parallel {for} simd', 'target teams loop',
];

function construct(name: string, clauses: string[], extra: Partial<ConstructSpec> = {}): ConstructSpec {
  const lang = languageOfWords(name.split(' '));
  return { name, clauses: new Set(clauses), ...(lang ? { lang } : {}), ...extra };
}

function leafConstructs(): ConstructSpec[] {
  const names = [...Object.keys(LEAF)];
  for (const form of COMBINED) {
    names.push(form.replace('{for}', 'for'));
    if (form.includes('{for}')) names.push(form.replace('{for}', 'do'));
  }
  return names.map((n) => construct(n, n.split(' ').flatMap((w) => LEAF[w] ?? [])));
}

const MEMORY_ORDER = ['seq_cst', 'acq_rel', 'release', 'acquire', 'relaxed'];
const STANDALONE = { standalone: true } as const;

export const OPENMP_CONSTRUCT_SPECS: readonly ConstructSpec[] = [
  ...leafConstructs(),
  construct('target data', ['if', 'device', 'map', 'use_device_ptr', 'use_device_addr']),
  construct('target enter data', ['if', 'device', 'map', 'depend', 'nowait'], STANDALONE),
  construct('target exit data', ['if', 'device', 'map', 'depend', 'nowait'], STANDALONE),
  construct('target update', ['if', 'device', 'to', 'from', 'depend', 'nowait'], STANDALONE),
  construct('declare target', ['to', 'enter', 'link', 'device_type', 'indirect'], {
    endInC: true,
    arg: { need: 'optional', shape: 'vars' },
  }),
  construct('begin declare target', ['device_type', 'indirect'], { lang: 'c', standalone: true }),
  construct('declare simd', ['simdlen', 'linear', 'aligned', 'uniform', 'inbranch', 'notinbranch'], {
    standalone: true,
    arg: { need: 'optional', shape: 'value' },
  }),
  construct('declare reduction', [], { standalone: true, arg: { need: 'required', shape: 'value' } }),
  construct('declare mapper', [], { standalone: true, arg: { need: 'required', shape: 'value' } }),
  construct('threadprivate', [], { standalone: true, arg: { need: 'required', shape: 'vars' } }),
  construct('atomic', ['read', 'write', 'update', 'capture', 'compare', 'fail', 'weak', 'hint', ...MEMORY_ORDER]),
  construct('critical', ['hint'], { arg: { need: 'optional', shape: 'value' } }),
  construct('flush', MEMORY_ORDER, { standalone: true, arg: { need: 'optional', shape: 'vars' } }),
  construct('barrier', [], STANDALONE),
  construct('taskwait', ['depend', 'nowait'], STANDALONE),
  construct('taskyield', [], STANDALONE),
  construct('taskgroup', ['task_reduction', 'allocate']),
  construct('single', ['private', 'firstprivate', 'copyprivate', 'nowait', 'allocate']),
  construct('section', []),
  construct('ordered', ['threads', 'simd', 'doacross', 'depend']),
  construct('scan', ['inclusive', 'exclusive'], STANDALONE),
  // OpenMP 5.x directives read without modelling them (OpenMP 5.2 §8.2 requires, §7.5 declare
  // variant, §7.4 metadirective, §8.3 assume, §9.1 tile/unroll, §6.5 allocate, error, nothing).
  ...['requires', 'declare variant', 'begin declare variant', 'metadirective', 'begin metadirective', 'assume', 'assumes',
    'begin assumes', 'error', 'nothing', 'tile', 'unroll', 'allocate', 'allocators', 'scope', 'interop', 'dispatch',
    'depobj', 'cancel', 'cancellation point', 'declare induction',
    // OpenMP 6.0 loop transformations and tasking directives, which newer codes already use.
    'reverse', 'interchange', 'fuse', 'split', 'stripe', 'task_iteration', 'taskgraph', 'workdistribute', 'groupprivate'].map((n) =>
    construct(n, [], {
      unmodelled: true,
      // Their arguments (`declare variant(f)`, `cancel for`, `allocate(x)`) are read as written.
      arg: { need: 'optional', shape: 'value' },
      ...(/^(begin |requires|declare|assumes|error|nothing|allocate$|depobj|cancel|interop|task_iteration|groupprivate)/.test(n) ? { standalone: true } : {}),
      ...(/^(declare variant|assumes|metadirective)$/.test(n) ? { endInC: true } : {}),
    })),
  construct('task', [
    'if', 'final', 'untied', 'default', 'mergeable', 'private', 'firstprivate', 'shared', 'in_reduction',
    'depend', 'priority', 'allocate', 'affinity', 'detach',
  ]),
];

export const OPENMP = buildGrammar('openmp', 'OpenMP', [...OPENMP_CONSTRUCT_SPECS], [...OPENMP_CLAUSE_SPECS], [
  'nowait',
  'copyprivate',
]);

/**
 * Reduction identifiers of the OpenMP reduction clauses, per base language. OpenMP also allows
 * user-defined identifiers (declared with `declare reduction`), which the reader accepts.
 */
export const OPENMP_REDUCTION_OPS = {
  c: ['+', '-', '*', 'max', 'min', '&', '|', '^', '&&', '||'],
  fortran: ['+', '-', '*', 'max', 'min', 'iand', 'ior', 'ieor', '.and.', '.or.', '.eqv.', '.neqv.'],
} as const;

/** Map types of the map clause; `tofrom` is the default when none is written. */
export const OPENMP_MAP_TYPES = ['to', 'from', 'tofrom', 'alloc', 'release', 'delete'] as const;

/** Map-type modifiers; names starting with `ompx_` are the reserved extension space and are accepted too. */
export const OPENMP_MAP_MODIFIERS = ['always', 'close', 'present', 'mapper', 'iterator'] as const;

/** Modifiers that may precede the reduction identifier. */
export const OPENMP_REDUCTION_MODIFIERS = ['inscan', 'task', 'default'] as const;
