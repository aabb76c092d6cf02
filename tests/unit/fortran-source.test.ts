/**
 * Fortran front end: source form. Free form (continuation, comments, `;`), fixed form (columns,
 * comment lines, column-6 continuation, column 72), preprocessor lines, and exact file ranges
 * across continuation lines. Standard clauses are quoted from memory, so every citation says so.
 */
import { describe, expect, it } from 'vitest';
import { buildFortranModel, isFixedFormPath } from '../../server/src/core/frontend/fortran';
import * as S from '../../server/src/core/symbolic';
import { fixtureText, load, outline, proc, span, textAt } from '../fixtures/fortran/check';

describe('source form by file name', () => {
  it.each([
    ['a.f', true], ['a.for', true], ['a.F', true], ['a.ftn', true], ['a.f77', true], ['A.FOR', true],
    ['a.f90', false], ['a.F90', false], ['a.f95', false], ['a.f03', false], ['a.f08', false],
  ])('%s is fixed form: %s', (path, fixed) => {
    // Compilers decide the form by extension (common practice); the .F variants are preprocessed.
    expect(isFixedFormPath(path)).toBe(fixed);
  });
});

describe('free source form (free_form.f90)', () => {
  const m = load('free_form.f90');
  const text = fixtureText('free_form.f90');
  const p = proc(m, 'free_form');

  it('reads the program with lower-cased names and case-insensitive keywords', () => {
    expect(m.language).toBe('fortran');
    expect(m.layout).toBe('column-major');
    expect(p.locals.map((d) => d.name)).toEqual(['n', 'a', 'b', 'i', 'note']);
    expect(outline(p.body)).toEqual([
      // `!` inside a character literal is not a comment (Fortran 2008 §3.3.2.3, from memory).
      "note = <'a!b'>",
      'do i = 1, n (trips n)',
      '  a(i) = b(i) + (2.0d0 * b(i))',
      'b(1) = 0.0d0',
      'b(2) = 1.0d0',
      'b(3) = 2.0d0',
      'i = 7 + 1',
      'a(i) = b(i - 1)',
      'other CONTINUE',
      'other print *, note, a(1)',
    ]);
  });

  it('joins continuation lines, with and without a leading `&`', () => {
    // Fortran 2008 §3.3.2.4 (from memory): a line ending in `&` continues; a leading `&` on the next line resumes right
    // after it, so `b(i-&` / `&1)` is `b(i-1)` with a token split across the lines.
    const loop = p.body[1];
    expect(loop.kind === 'loop' && loop.header).toBe('DO I = 1,          N');
    const a = p.body[6];
    expect(a.kind).toBe('assign');
    expect(span(a.range)).toBe('17:2-18:7');
    expect(textAt(text, a.range)).toBe('a(i) = b(i-&\n    &1)');
  });

  it('splits `;`-separated statements with their own ranges', () => {
    // Fortran 2008 §3.3.2.5 (from memory): `;` separates statements on one line.
    const [b1, b2, b3] = p.body.slice(2, 5);
    expect([b1, b2, b3].map((s) => textAt(text, s.range))).toEqual(['b(1) = 0.0d0', 'b(2) = 1.0d0', 'b(3) = &\n      2.0d0']);
  });

  it('keeps a comment after the continuation mark out of the statement', () => {
    const s = p.body[5];
    expect(s.kind === 'assign' && s.target.kind === 'var' && s.target.name).toBe('i');
    expect(span(s.range)).toBe('15:2-16:7');
  });

  it('strips a free-form label from the statement', () => {
    // Fortran 2008 §3.2.5 (from memory): a statement label is 1 to 5 digits before the statement.
    expect(span(p.body[7].range)).toBe('19:3-19:11');
  });

  it('binds the parameter N', () => {
    expect(S.toString(m.bindings.get('n')!)).toBe('100');
  });
});

describe('fixed source form (fixed_form.f)', () => {
  const m = load('fixed_form.f');
  const text = fixtureText('fixed_form.f');
  const p = proc(m, 'fixed');

  it('skips comment lines, reads labels, joins column-6 continuations, ignores columns past 72', () => {
    // Fortran 2008 §3.3.3.2 (from memory): C, c or * in column 1 starts a comment line; §3.3.3.3: a character other than
    // blank or zero in column 6 continues the previous line; 3.3.3.1: columns 73 on are ignored.
    expect(outline(p.body)).toEqual([
      'do j = 1, m (trips m)',
      '  do i = 1, n (trips n)',
      '    u(i, j) = v(i, j) + (0.5d0 * v(i, j))',
      '    other CONTINUE',
      'do i = 1, n (trips n)',
      '  v(i, 1) = 0.0d0',
      '  other CONTINUE',
      'do j = 2, m - 1 step 2 (trips (m - 3)/2 + 1)',
      '  v(1, j) = u(1, j)',
      '  other CONTINUE',
      'other PRINT *, U(1, 1)',
    ]);
  });

  it('ends two labelled loops at their shared terminal statement', () => {
    // Fortran 2008 §8.1.6 (from memory; an obsolescent form): nested nonblock DO loops may share one
    // terminal statement, which then belongs to the innermost loop.
    const outer = p.body[0];
    expect(outer.kind === 'loop' && span(outer.range)).toBe('9:6-13:14');
    expect(outer.kind === 'loop' && outer.body.length).toBe(1);
  });

  it('maps a statement continued in column 6 back to both lines', () => {
    const outer = p.body[0];
    const inner = outer.kind === 'loop' ? outer.body[0] : undefined;
    const assign = inner?.kind === 'loop' ? inner.body[0] : undefined;
    expect(assign && span(assign.range)).toBe('11:12-12:37');
    expect(assign && textAt(text, assign.range)).toBe('U(I, J) = V(I, J) +\n     &                0.5D0 * V(I, J)');
  });

  it('normalises `do 20 i = n, 1, -1` to an increasing range', () => {
    // Fortran 2008 §8.1.6.6.1 (from memory): iteration count max(INT((m2 - m1 + m3)/m3), 0) = n for m1 = n, m2 = 1, m3 = -1.
    const l = p.body[1];
    expect(l.kind === 'loop' && [S.toString(l.lower!), S.toString(l.upper!), S.toString(l.step!)]).toEqual(['1', 'n', '1']);
    expect(l.kind === 'loop' && S.evaluate(l.tripCount!, m.bindings)).toBe(50);
  });

  it('evaluates the strided loop with the PARAMETER bindings', () => {
    // Fortran 2008 §8.1.6.6.1 (from memory): INT((M - 1 - 2 + 2)/2) = INT(19/2) = 9 iterations for M = 20.
    const l = p.body[2];
    expect(l.kind === 'loop' && S.evaluate(l.tripCount!, new Map([...m.bindings, ...p.bindings]))).toBe(9);
    expect(p.bindings.get('m') && S.toString(p.bindings.get('m')!)).toBe('20');
  });

  it('reads the same text as free form differently', () => {
    // In free form the column-6 `&` is not a continuation mark, so the file must not be read as one.
    const free = buildFortranModel(text, 'fixed_form.f90');
    expect(outline(free.procedures[0]?.body ?? [])).not.toEqual(outline(p.body));
  });
});

describe('preprocessor lines (preprocessed.F90)', () => {
  const m = load('preprocessed.F90');
  const p = proc(m, 'preprocessed');

  it('turns #define constants into bindings, under their lower-cased Fortran names', () => {
    expect([...m.bindings].map(([k, v]) => `${k}=${S.toString(v)}`)).toEqual(['nx=512', 'ny=2*nx', 'steps=100', 'real_kind=8']);
    expect(S.evaluate(m.bindings.get('ny')!, m.bindings)).toBe(1024);
  });

  it('keeps the first branch of every conditional and inlines a floating #define as a literal', () => {
    // As in the C front end, the first branch is the configuration analysed.
    expect(outline(p.body)).toEqual([
      'do _i2 = 1, ny (trips ny) implied',
      '  do _i1 = 1, nx (trips nx) implied',
      '    u(_i1, _i2) = 0',
      'do t = 1, steps (trips steps)',
      '  do _i2 = 1, ny (trips ny) implied',
      '    do _i1 = 1, nx (trips nx) implied',
      '      u(_i1, _i2) = u(_i1, _i2) + 0.25d0',
      'other print *, u(1, 1)',
    ]);
    // A `d` exponent makes a double precision literal (Fortran 2008 §4.4.2.3, from memory).
    expect(m.floatConstants.get('dt')?.bytes).toBe(8);
    expect(p.locals.find((d) => d.name === 'u')?.type.bytes).toBe(8);
  });
});
