/**
 * Classification of directives by what they do, shared by front ends and analyses.
 * Construct names are the normalised ones produced by the directive reader.
 */
import type { Clause, Directive } from '../types';
import { OPENACC } from '../directives/openacc';
import { OPENMP } from '../directives/openmp';

const accStandalone = new Set(['update', 'enter data', 'exit data', 'wait', 'declare', 'routine', 'cache', 'init', 'shutdown', 'set']);
const ompStandalone = new Set([
  'target update', 'target enter data', 'target exit data', 'barrier', 'taskwait', 'taskyield', 'flush',
  'requires', 'threadprivate', 'scan', 'depobj', 'error',
]);

/** Standalone directives act where they stand and govern no following statement. */
export function isStandaloneDirective(d: Directive): boolean {
  if (d.isEnd) return true;
  if (d.construct.startsWith('declare') || d.construct.startsWith('begin declare') || d.construct.startsWith('end declare')) return true;
  if (d.family === 'openacc' ? accStandalone.has(d.construct) : ompStandalone.has(d.construct)) return true;
  // The grammar tables know the rest (`cancel`, `cancellation point`, `interop`, …).
  return (d.family === 'openacc' ? OPENACC : OPENMP).constructs.get(d.construct)?.standalone === true;
}

/**
 * True when the construct runs its block on the device: OpenACC parallel/kernels/serial
 * (alone or combined with loop) and OpenMP constructs that start with `target` and are not
 * data-only constructs.
 */
export function isOffloadCompute(d: Directive): boolean {
  const words = d.construct.split(' ');
  if (d.family === 'openacc') return ['parallel', 'kernels', 'serial'].includes(words[0]);
  return words[0] === 'target' && !['data', 'enter', 'exit', 'update'].includes(words[1] ?? '');
}

/** Structured data constructs: OpenACC `data`, OpenMP `target data`. */
export function isDataConstruct(d: Directive): boolean {
  return d.family === 'openacc' ? d.construct === 'data' : d.construct === 'target data';
}

/** True when the directive distributes the loop that follows over device or host threads. */
export function isLoopDirective(d: Directive): boolean {
  const words = d.construct.split(' ');
  if (d.family === 'openacc') return words.includes('loop');
  // Loop-associated constructs (OpenMP 5.2 §4.4): their Fortran end directive is optional.
  return words.some((w) => ['for', 'do', 'distribute', 'loop', 'simd', 'taskloop', 'tile', 'unroll', 'reverse', 'interchange', 'fuse', 'split', 'stripe'].includes(w));
}

export function clausesNamed(d: Directive, ...names: string[]): Clause[] {
  return d.clauses.filter((c) => names.includes(c.canonical));
}

/** `collapse(n)` value of a loop directive, 1 when absent or unreadable. */
export function collapseCount(d: Directive): number {
  const c = clausesNamed(d, 'collapse')[0];
  const n = c?.value ? Number.parseInt(c.value, 10) : 1;
  return Number.isFinite(n) && n > 0 ? n : 1;
}
