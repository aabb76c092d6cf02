/**
 * Fortran front end: directives. Loop constructs attach to the DO loop that follows and may be
 * closed by an optional end directive; block constructs (data, parallel, kernels, host_data,
 * target, target data) need their end directive and become a BlockStmt; standalone directives
 * become DirectiveStmts. Specification sections are quoted from memory, so every citation says so.
 */
import { describe, expect, it } from 'vitest';
import { buildFortranModel } from '../../server/src/core/frontend/fortran';
import type { BlockStmt, LoopStmt } from '../../server/src/core/model/program';
import { fixtureText, load, outline, proc, span, textAt } from '../fixtures/fortran/check';

describe('OpenACC (directives_acc.f90)', () => {
  const m = load('directives_acc.f90');
  const text = fixtureText('directives_acc.f90');
  const p = proc(m, 'acc_demo');

  it('builds regions, attaches loop constructs and keeps standalone directives in place', () => {
    expect(outline(p.body)).toEqual([
      // OpenACC 3.3 §2.6.5 (from memory): `!$acc data` ... `!$acc end data` in Fortran.
      'block [data]',
      '  do t = 1, steps (trips steps)',
      // OpenACC 3.3 §2.11 (from memory): a combined construct applies to the loop; its end directive is optional.
      '    do i = 2, n - 1 (trips n - 2) [parallel loop]',
      '      a(i) = 0.5d0 * (b(i - 1) + b(i + 1))',
      // OpenACC 3.3 §2.5.3 (from memory): `!$acc kernels` ... `!$acc end kernels` holds array syntax too.
      '    block [kernels]',
      '      do _i1 = 2, n - 1 (trips n - 2) implied',
      '        b(_i1) = a(_i1)',
      // OpenACC 3.3 §2.5.1 (from memory): `!$acc parallel` ... `!$acc end parallel`, with a loop inside.
      '    block [parallel]',
      '      do i = 1, n (trips n) [loop]',
      '        a(i) = a(i) + 1.0d0',
      '    if mod(t, 10) == 0',
      // OpenACC 3.3 §2.14.4 (from memory): update is an executable directive of its own.
      '      directive update',
      '      other print *, a(1)',
      'directive enter data',
      // OpenACC 3.3 §2.8 (from memory): `!$acc host_data` ... `!$acc end host_data`.
      'block [host_data]',
      '  call consume(field)',
      'directive exit data',
      'directive wait',
    ]);
  });

  it('lists every directive in source order, end directives and module declare included', () => {
    expect(m.directives.map((d) => `${d.range.start.line}:${d.isEnd ? 'end ' : ''}${d.construct}`)).toEqual([
      '5:declare', '14:data', '17:parallel loop', '21:end parallel loop', '22:kernels', '24:end kernels',
      '25:parallel', '26:loop', '30:end parallel', '32:update', '36:end data', '37:enter data',
      '38:host_data', '40:end host_data', '41:exit data', '42:wait',
    ]);
    expect(m.findings).toEqual([]);
  });

  it('reads a directive continued with `&` and `!$acc&` as one, with its whole range', () => {
    const data = m.directives[1];
    expect(data.clauses.map((c) => c.name)).toEqual(['copy', 'copyin']);
    expect(textAt(text, data.range)).toBe('!$acc data copy(a) &\n  !$acc&     copyin(b)');
  });

  it('gives a region the range from its directive to its end directive', () => {
    const region = p.body[0] as BlockStmt;
    expect(span(region.range)).toBe('14:2-36:16');
    expect(region.directives.map((d) => d.construct)).toEqual(['data']);
  });

  it('attaches `!$acc update` inside the guard as a directive statement with its clause', () => {
    const time = (p.body[0] as BlockStmt).body[0] as LoopStmt;
    const guard = time.body[3];
    const update = guard.kind === 'if' ? guard.then[0] : undefined;
    expect(update?.kind === 'directive' && update.directive.clauses[0].vars?.map((v) => v.text)).toEqual(['a(1:n / 2)']);
  });
});

describe('OpenMP (directives_omp.f90)', () => {
  const m = load('directives_omp.f90');
  const p = proc(m, 'omp_demo');

  it('builds target data and target regions and consumes optional end directives', () => {
    expect(outline(p.body)).toEqual([
      // OpenMP 5.2, target data construct (from memory): `!$omp target data` ... `!$omp end target data`.
      'block [target data]',
      '  do t = 1, steps (trips steps)',
      // OpenMP 5.2, Fortran loop-associated constructs (from memory): `!$omp end ...` after the loop is optional.
      '    do i = 2, n - 1 (trips n - 2) [target teams distribute parallel do]',
      '      a(i) = 0.5d0 * (b(i - 1) + b(i + 1))',
      '    block [target]',
      '      b(1) = a(1)',
      '    directive target update',
      '    b(n) = a(1)',
      '    directive target update',
      'directive target enter data',
      'do i = 1, n (trips n) [target teams distribute parallel do simd]',
      '  a(i) = 2.0d0 * a(i)',
      'directive target exit data',
    ]);
    expect(m.findings).toEqual([]);
  });
});

describe('fixed-form sentinels (fixed_directives.f)', () => {
  const m = load('fixed_directives.f');
  const text = fixtureText('fixed_directives.f');

  it('reads c$acc, *$acc and !$acc in column 1 and a c$acc& continuation', () => {
    expect(outline(proc(m, 'smooth').body)).toEqual([
      'do i = 2, n - 1 (trips n - 2) [parallel loop]',
      '  a(i) = 0.5 * (b(i - 1) + b(i + 1))',
      '  other CONTINUE',
      'directive update',
      'block [kernels]',
      '  a(1) = a(2)',
      'other RETURN',
    ]);
    expect(m.directives[0].clauses.map((c) => c.name)).toEqual(['copyin', 'copyout']);
    expect(textAt(text, m.directives[0].range)).toBe('c$acc parallel loop copyin(B)\nc$acc&  copyout(A)');
  });
});

describe('directive findings on half-typed code', () => {
  const build = (lines: string[]) => buildFortranModel(`${lines.join('\n')}\n`, 'broken.f90');

  it('reports a region without its end directive and closes it where the enclosing construct ends', () => {
    const m = build([
      'subroutine s(a, n)',
      '  integer :: n, i',
      '  real :: a(n)',
      '  do i = 1, n',
      '    !$acc kernels',
      '    a(i) = 0.0',
      '  end do',
      '  a(1) = 1.0',
      'end subroutine s',
    ]);
    expect(m.findings.map((f) => `${f.code} ${f.severity} ${span(f.range)}`)).toEqual(['directive-syntax error 4:4-4:17']);
    expect(m.findings[0].message).toContain('`!$acc end kernels`');
    expect(outline(m.procedures[0].body)).toEqual([
      'do i = 1, n (trips n)',
      '  block [kernels]',
      '    a(i) = 0.0',
      'a(1) = 1.0',
    ]);
  });

  it('reports an end directive that closes nothing', () => {
    const m = build(['program p', '  real :: x', '  x = 1.0', '  !$omp end target data', 'end program p']);
    expect(m.findings.map((f) => `${span(f.range)} ${f.message}`)).toEqual([
      '3:2-3:23 `!$omp end target data` has no matching `!$omp target data` before it in this block.',
    ]);
    expect(m.directives.map((d) => d.construct)).toEqual(['target data']);
  });

  it('reports a loop construct with nothing after it', () => {
    const m = build(['program p', '  !$acc parallel loop', 'end program p']);
    expect(m.findings).toHaveLength(1);
    expect(m.findings[0].message).toContain('must be followed by the statement it applies to');
  });

  it('passes on the directive reader’s own findings', () => {
    const m = build(['program p', '  real :: x(4)', '  !$acc update self(x', '  x = 1.0', 'end program p']);
    expect(m.findings.map((f) => f.code)).toEqual(['directive-syntax']);
    expect(m.procedures[0].body.map((s) => s.kind)).toEqual(['directive', 'loop']);
  });

  it('closes a region whose end directive is missing at the end of the file', () => {
    const m = build(['program p', '  real :: x(4)', '  !$acc data copy(x)', '  x = 1.0']);
    expect(m.findings[0].message).toContain('the end of the file');
    expect(outline(m.procedures[0].body)).toEqual(['block [data]', '  do _i1 = 1, 4 (trips 4) implied', '    x(_i1) = 1.0']);
  });
});
