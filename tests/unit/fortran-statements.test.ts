/**
 * Fortran front end: statements other than loops and branches (calls, input/output, BLOCK,
 * old-style declarations, implicit typing) and a main program without a PROGRAM statement.
 * Standard clauses are quoted from memory, so every citation says so.
 */
import { describe, expect, it } from 'vitest';
import * as S from '../../server/src/core/symbolic';
import { fixtureText, load, outline, proc, show, textAt } from '../fixtures/fortran/check';

describe('statements (statements.f90)', () => {
  const m = load('statements.f90');
  const text = fixtureText('statements.f90');
  const p = proc(m, 'statements');

  it('reads every statement in order', () => {
    expect(outline(p.body)).toEqual([
      // A complex literal is kept as a call to cmplx of its two parts.
      'z = cmplx(1.0d0, 2.0d0)',
      // A character literal continued with `&` … `&` is one literal (Fortran 2008 §3.3.2.4, from memory).
      "label = <'xy'>",
      'other read (*, *) m, a(1)',
      'other write (*, \'(a)\') (a(k), k = 1, m)',
      'other write (*, *) title, label',
      'if n > 0',
      '  call helper(a, count=n)',
      // Relational operators bind tighter than .not., .not. tighter than .and., .and. tighter
      // than .or. (Fortran 2008 §7.1.2, from memory); operators take their C spellings.
      'flag = ((a(1) == b) && !(b < 0.0)) || (a(2) != a(3))',
      'x = (a(1) ** 2) + c(1, 2)',
      // A COMMON array is a local array with its written shape.
      'do _i1 = 1, 100 (trips 100) implied',
      '  w(_i1) = 0.0d0',
      'do _i1 = 1, 10 (trips 10) implied',
      '  a(_i1) = <[1.0, 2.0, 3.0, 4.0, 5.0, 6.0, 7.0, 8.0, 9.0, 10.0]>',
      // A labelled DO may end at a labelled END DO (Fortran 2008 §8.1.6.2, from memory).
      'do k = 1, ntimes (trips ntimes)',
      '  iw = iw + k',
      'block',
      '  tmp = n',
      '  a(1) = real(tmp)',
      'other go to 20',
      'other continue',
      'other print *, w',
      'other return',
    ]);
  });

  it('marks the items of a READ as writes and of a WRITE as reads, implied-do lists included', () => {
    const read = p.body[2];
    const write = p.body[3];
    const a1 = read.kind === 'other' ? read.values[1] : undefined;
    expect(a1?.kind === 'index' && [a1.access.isWrite, a1.access.isRead, textAt(text, a1.access.range)]).toEqual([true, false, 'a(1)']);
    expect(write.kind === 'other' && write.values.map(show)).toEqual(['a(k)', '1', 'm']);
    const ak = write.kind === 'other' ? write.values[0] : undefined;
    expect(ak?.kind === 'index' && [ak.access.isWrite, ak.access.isRead]).toEqual([false, true]);
  });

  it('reads a whole array in an output list as every element', () => {
    const print = p.body[p.body.length - 2];
    const w = print.kind === 'other' ? print.values[0] : undefined;
    expect(w?.kind === 'index' && [w.access.array, w.access.subscriptText, w.access.isRead, textAt(text, w.access.range)]).toEqual(['w', [':'], true, 'w']);
  });

  it('keeps keyword arguments of a call in argText and their values in args', () => {
    const guard = p.body[5];
    const call = guard.kind === 'if' ? guard.then[0] : undefined;
    expect(call?.kind === 'call' && [call.name, call.argText, call.args.map(show)]).toEqual(['helper', ['a', 'count=n'], ['a', 'n']]);
    expect(call && textAt(text, call.range)).toBe('call helper(a, count=n)');
  });

  it('types names through IMPLICIT DOUBLE PRECISION and the default i-n rule', () => {
    // Fortran 2008 §5.5 (from memory): an IMPLICIT statement maps first letters to types;
    // letters without a mapping keep the default (i-n integer).
    const local = (n: string) => p.locals.find((d) => d.name === n);
    expect(local('c')?.type.name).toBe('double');
    expect(local('w')?.type.name).toBe('double');
    expect(local('iw')?.type.name).toBe('int');
    // An explicit type wins over the implicit one.
    expect(local('a')?.type.name).toBe('float');
    expect(local('z')?.type.name).toBe('complex-double');
  });

  it('reads F77 declarations, DIMENSION, COMMON and CHARACTER forms', () => {
    const dims = (n: string) => p.locals.find((d) => d.name === n)?.dims.map((x) => S.toString(x));
    expect(dims('a')).toEqual(['10']);
    expect(dims('b')).toEqual([]);
    expect(dims('c')).toEqual(['n', '2']);
    expect(dims('w')).toEqual(['100']);
    expect(dims('label')).toEqual([]);
    expect(p.locals.find((d) => d.name === 'title')?.isConst).toBe(true);
  });

  it('binds a local with a literal initialisation that nothing reassigns', () => {
    // As in C: `integer :: ntimes = 25` is a constant while no statement assigns ntimes.
    expect([...p.bindings].map(([k, v]) => `${k}=${S.toString(v)}`)).toEqual(['ntimes=25']);
  });
});

describe('main program without PROGRAM statement (implicit_main.f)', () => {
  const m = load('implicit_main.f');
  const text = fixtureText('implicit_main.f');

  it('reads the statements as a main program named main', () => {
    // Fortran 2008 §11.1 (from memory): the PROGRAM statement of a main program is optional.
    expect(m.procedures.map((p) => p.name)).toEqual(['main']);
    const p = m.procedures[0];
    expect(outline(p.body)).toEqual([
      'n = 200',
      'do i = 1, n (trips n)',
      '  x(i) = 0.5 * i',
      'other PRINT *, X(N)',
    ]);
    expect(textAt(text, p.range).split('\n').pop()).toBe('      END');
    // Default implicit typing: x is real, i is integer (Fortran 2008 §5.5, from memory).
    expect(p.locals.map((d) => `${d.name}:${d.type.name}`)).toEqual(['x:float', 'i:int']);
  });

  it('ends a labelled DO at a labelled action statement, which runs in the loop', () => {
    const loop = m.procedures[0].body[1];
    expect(loop.kind === 'loop' && textAt(text, loop.range)).toBe('DO 5 I = 1, N\n    5 X(I) = 0.5 * I');
  });
});
