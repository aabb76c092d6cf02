/**
 * How a directive relates to the statements around it. Fortran closes block constructs with an
 * end directive: OpenACC `parallel`, `kernels`, `serial`, `data`, `host_data` (OpenACC 3.3
 * §2.5.1–§2.6.5 and §2.8, from memory) and OpenMP `target`, `target data`, `parallel`, `teams`
 * and the like (OpenMP 5.2 §3.1, from memory) need `!$acc end …` / `!$omp end …`. Loop
 * constructs apply to the DO loop that follows and may be followed by an optional end
 * directive; `atomic` applies to the next statement. Standalone directives act where they stand.
 */
import { isLoopDirective, isStandaloneDirective } from '../../model/directives';
import type { Directive } from '../../types';

export type DirectiveRole = 'end' | 'standalone' | 'next' | 'region';

export function directiveRole(d: Directive, endFollows: () => boolean): DirectiveRole {
  if (d.isEnd) return 'end';
  if (isStandaloneDirective(d) || d.construct === 'section') return 'standalone';
  if (d.construct === 'ordered' && d.clauses.some((c) => c.canonical === 'depend' || c.canonical === 'doacross')) return 'standalone';
  if (isLoopDirective(d)) return 'next';
  // `atomic capture` may cover two statements, and then its end directive is required.
  if (d.construct === 'atomic') return d.clauses.some((c) => c.canonical === 'capture') && endFollows() ? 'region' : 'next';
  return 'region';
}

/** True when `end` is the end directive of `open`. */
export function closes(end: Directive | undefined, open: Directive): boolean {
  return !!end && end.isEnd && end.family === open.family && end.construct === open.construct;
}

export const sentinel = (d: Directive): string => (d.family === 'openacc' ? '!$acc' : '!$omp');
