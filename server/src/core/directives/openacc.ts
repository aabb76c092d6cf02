/**
 * OpenACC 3.3 constructs and clauses.
 *
 * The allowed-clause sets follow the per-construct clause lists of the specification closely
 * enough to catch the mistakes people actually make (a loop clause on a data directive, a data
 * clause on `update`), but they are deliberately coarse: restrictions that depend on values or
 * on the enclosing region belong to later analysis passes, not to the reader.
 */
import { buildGrammar, clause, type ClauseSpec, type ConstructSpec } from './grammar';

/** Data clause modifiers (§2.7.4 in 3.3); accepted per clause as the specification lists them. */
const COPY_MODS = ['always', 'alwaysin', 'alwaysout', 'capture'];
const COPYIN_MODS = ['readonly', 'always', 'alwaysin', 'capture'];
const COPYOUT_MODS = ['zero', 'always', 'alwaysout', 'capture'];
const CREATE_MODS = ['zero', 'capture'];

export const OPENACC_CLAUSE_SPECS: readonly ClauseSpec[] = [
  clause('copy', 'required', 'vars', { modifiers: COPY_MODS }),
  clause('copyin', 'required', 'vars', { modifiers: COPYIN_MODS }),
  clause('copyout', 'required', 'vars', { modifiers: COPYOUT_MODS }),
  clause('create', 'required', 'vars', { modifiers: CREATE_MODS }),
  // The pre-2.5 aliases still appear in older ports; they mean exactly the canonical clause.
  clause('pcopy', 'required', 'vars', { canonical: 'copy', modifiers: COPY_MODS }),
  clause('pcopyin', 'required', 'vars', { canonical: 'copyin', modifiers: COPYIN_MODS }),
  clause('pcopyout', 'required', 'vars', { canonical: 'copyout', modifiers: COPYOUT_MODS }),
  clause('pcreate', 'required', 'vars', { canonical: 'create', modifiers: CREATE_MODS }),
  clause('present_or_copy', 'required', 'vars', { canonical: 'copy', modifiers: COPY_MODS }),
  clause('present_or_copyin', 'required', 'vars', { canonical: 'copyin', modifiers: COPYIN_MODS }),
  clause('present_or_copyout', 'required', 'vars', { canonical: 'copyout', modifiers: COPYOUT_MODS }),
  clause('present_or_create', 'required', 'vars', { canonical: 'create', modifiers: CREATE_MODS }),
  clause('present', 'required', 'vars'),
  clause('no_create', 'required', 'vars'),
  clause('delete', 'required', 'vars'),
  clause('deviceptr', 'required', 'vars'),
  clause('attach', 'required', 'vars'),
  clause('detach', 'required', 'vars'),
  clause('private', 'required', 'vars'),
  clause('firstprivate', 'required', 'vars'),
  clause('reduction', 'required', 'reduction'),
  clause('use_device', 'required', 'vars'),
  clause('device_resident', 'required', 'vars'),
  clause('link', 'required', 'vars'),
  // `host` and `device` move data on `update`; `self` does too there, but takes a condition on
  // compute constructs, so the reader switches its shape by construct (see clauseFor below).
  clause('host', 'required', 'vars'),
  clause('device', 'required', 'vars'),
  clause('self', 'optional', 'value'),
  clause('collapse', 'required', 'value', { once: true }),
  clause('gang', 'optional', 'value'),
  clause('worker', 'optional', 'value'),
  clause('vector', 'optional', 'value'),
  clause('seq', 'none', 'flag'),
  clause('independent', 'none', 'flag'),
  clause('auto', 'none', 'flag'),
  clause('tile', 'required', 'value'),
  clause('async', 'optional', 'value'),
  clause('wait', 'optional', 'value'),
  clause('if', 'required', 'value'),
  clause('if_present', 'none', 'flag'),
  clause('finalize', 'none', 'flag'),
  clause('default', 'required', 'value', { values: ['none', 'present'], once: true }),
  clause('num_gangs', 'required', 'value', { once: true }),
  clause('num_workers', 'required', 'value', { once: true }),
  clause('vector_length', 'required', 'value', { once: true }),
  clause('device_type', 'required', 'value'),
  clause('dtype', 'required', 'value', { canonical: 'device_type' }),
  clause('device_num', 'required', 'value'),
  clause('default_async', 'required', 'value'),
  clause('bind', 'required', 'value'),
  clause('nohost', 'none', 'flag'),
  // The atomic-clause of §2.12 is a single keyword after `atomic`.
  clause('read', 'none', 'flag'),
  clause('write', 'none', 'flag'),
  clause('update', 'none', 'flag'),
  clause('capture', 'none', 'flag'),
];

/** `update self(list)` moves data, unlike `parallel self(cond)`. */
export const OPENACC_UPDATE_SELF = clause('self', 'required', 'vars');

const DATA = ['copy', 'copyin', 'copyout', 'create', 'no_create', 'present', 'deviceptr', 'attach'];
const COMPUTE = ['async', 'wait', 'device_type', 'if', 'self', 'default', ...DATA];
const PARALLEL = [...COMPUTE, 'num_gangs', 'num_workers', 'vector_length', 'reduction', 'private', 'firstprivate'];
const SERIAL = [...COMPUTE, 'reduction', 'private', 'firstprivate'];
const KERNELS = [...COMPUTE, 'num_gangs', 'num_workers', 'vector_length'];
const LOOP = ['collapse', 'gang', 'worker', 'vector', 'seq', 'independent', 'auto', 'tile', 'device_type', 'private', 'reduction'];
const RUNTIME = ['device_type', 'device_num', 'if'];

function construct(name: string, clauses: string[], extra: Partial<ConstructSpec> = {}): ConstructSpec {
  return { name, clauses: new Set(clauses), ...extra };
}

export const OPENACC_CONSTRUCT_SPECS: readonly ConstructSpec[] = [
  construct('parallel', PARALLEL),
  construct('serial', SERIAL),
  construct('kernels', KERNELS),
  construct('loop', LOOP),
  construct('parallel loop', [...PARALLEL, ...LOOP]),
  construct('serial loop', [...SERIAL, ...LOOP]),
  construct('kernels loop', [...KERNELS, ...LOOP]),
  construct('data', ['if', 'async', 'wait', 'device_type', 'default', ...DATA]),
  construct('enter data', ['if', 'async', 'wait', 'copyin', 'create', 'attach'], { standalone: true }),
  construct('exit data', ['if', 'async', 'wait', 'copyout', 'delete', 'detach', 'finalize'], { standalone: true }),
  construct('host_data', ['use_device', 'if', 'if_present']),
  construct('update', ['async', 'wait', 'device_type', 'if', 'if_present', 'self', 'host', 'device'], { standalone: true }),
  construct('declare', ['copy', 'copyin', 'copyout', 'create', 'present', 'deviceptr', 'device_resident', 'link'], {
    standalone: true,
  }),
  construct('wait', ['async', 'if'], { standalone: true, arg: { need: 'optional', shape: 'value' } }),
  construct('atomic', ['read', 'write', 'update', 'capture', 'if']),
  construct('routine', ['gang', 'worker', 'vector', 'seq', 'bind', 'device_type', 'nohost'], {
    standalone: true,
    arg: { need: 'optional', shape: 'value' },
  }),
  construct('cache', [], { standalone: true, arg: { need: 'required', shape: 'vars', modifiers: ['readonly'] } }),
  construct('init', RUNTIME, { standalone: true }),
  construct('shutdown', RUNTIME, { standalone: true }),
  construct('set', ['default_async', ...RUNTIME], { standalone: true }),
];

export const OPENACC = buildGrammar('openacc', 'OpenACC', [...OPENACC_CONSTRUCT_SPECS], [...OPENACC_CLAUSE_SPECS], []);

/** Reduction operators of §2.5.15, per base language. */
export const OPENACC_REDUCTION_OPS = {
  c: ['+', '*', 'max', 'min', '&', '|', '^', '&&', '||'],
  fortran: ['+', '*', 'max', 'min', 'iand', 'ior', 'ieor', '.and.', '.or.', '.eqv.', '.neqv.'],
} as const;
