/**
 * Fortran front end: DO loops. Bounds are inclusive and normalised to an increasing range with a
 * positive step, as the C front end does; trip counts print with symbolic toString and evaluate
 * with the bindings. Standard clauses are quoted from memory, so every citation says so.
 */
import { describe, expect, it } from 'vitest';
import * as S from '../../server/src/core/symbolic';
import { fixtureText, load, loops, outline, proc, span, textAt } from '../fixtures/fortran/check';

describe('DO loops (loops.f90)', () => {
  const m = load('loops.f90');
  const text = fixtureText('loops.f90');
  const p = proc(m, 'loops');
  const all = loops(p.body);
  const byLine = (line: number) => all.filter((l) => l.keywordRange.start.line === line);

  it('reads every header shape', () => {
    // Fortran 2008 §8.1.6.6.1 (from memory): a counted loop runs max(INT((m2 - m1 + m3)/m3), 0)
    // times; the model keeps lower <= upper and a positive step.
    expect(outline(p.body)).toEqual([
      'do i = 1, n (trips n)',
      '  a(i, 1) = 0.0',
      'do i = 1, n (trips n)',
      '  a(i, 2) = 1.0',
      'do i = 1, n step 3 (trips (n - 1)/3 + 1)',
      '  a(i, 3) = 2.0',
      'do i = 10, 1 (trips 0)',
      '  a(i, 4) = 3.0',
      's = 0.0',
      'do (no variable)',
      '  s = s + 1.0',
      'do j = 1, m (trips m)',
      '  do i = 1, j (trips j) triangular',
      '    if a(i, j) < 0.0',
      '      other cycle outer',
      '    if a(i, j) > 1.0e6',
      '      other exit inner',
      '    a(i, j) = a(i, j) * 0.5',
      'do j = 1, m (trips m)',
      '  do i = 2, n - 1 step 2 (trips (n - 3)/2 + 1)',
      '    if a(i, j) > 0.0',
      '      a(i, j) = sqrt(a(i, j))',
      'do k = 1, m (trips m)',
      '  a(1, k) = real(k)',
      '  other continue',
      'k = 0',
      // The bare DO has a step counter: k = 0 before it, k = k + 1 first, exit once k > n, so
      // the exit test sees k = 1 … n + 1: n + 1 passes (hand count; model/stepCounters.ts).
      'do k = 0, n (trips n + 1)',
      '  k = k + 1',
      '  if k > n',
      '    other exit',
    ]);
  });

  it('evaluates trip counts with bindings', () => {
    const b = new Map([['n', S.num(100)], ['m', S.num(7)]]);
    const trips = all.map((l) => (l.tripCount ? S.evaluate(l.tripCount, b) : undefined));
    // n = 100: 100, 100, INT((100 - 1 + 3)/3) = 34, 0 (10 > 1), while: none, m = 7, j (triangular),
    // do concurrent INT((99 - 2 + 2)/2) = 49, labelled 7, bare do with its counter k: n + 1 = 101.
    expect(trips).toEqual([100, 100, 34, 0, undefined, 7, undefined, 7, 49, 7, 101]);
  });

  it('gives the `do` keyword as keywordRange and the whole construct as range', () => {
    const [first] = byLine(8);
    expect(span(first.keywordRange)).toBe('8:2-8:4');
    expect(textAt(text, first.range)).toBe('do i = 1, n\n    a(i, 1) = 0.0\n  end do');
    // `enddo` closes a loop as `end do` does (Fortran 2008 §8.1.6, from memory).
    expect(span(byLine(11)[0].range)).toBe('11:2-13:7');
  });

  it('reads named constructs: the name is part of the range, the keyword follows it', () => {
    const [outer] = byLine(24);
    expect(span(outer.keywordRange)).toBe('24:9-24:11');
    expect(textAt(text, outer.range).split('\n')[0]).toBe('outer: do j = 1, m');
    expect(textAt(text, outer.range).split('\n').pop()).toBe('  end do outer');
  });

  it('flags bounds that depend on an enclosing loop variable as triangular', () => {
    const [inner] = byLine(25);
    expect(inner.triangular).toBe(true);
    expect(S.toString(inner.upper!)).toBe('j');
  });

  it('makes `do concurrent` nested loops in the order written, with the mask as an IfStmt', () => {
    // Fortran 2008 §8.1.6 (from memory): the index-name list and an optional scalar mask.
    const [outer, inner] = byLine(31);
    expect([outer.variable, inner.variable]).toEqual(['j', 'i']);
    expect(outer.body).toEqual([inner]);
    expect(inner.body[0].kind).toBe('if');
    expect(span(outer.keywordRange)).toBe('31:2-31:4');
    expect(inner.implied).toBeUndefined();
  });

  it('ends a labelled DO at the statement with its label', () => {
    const [labelled] = byLine(34);
    expect(labelled.variable).toBe('k');
    expect(textAt(text, labelled.range)).toBe('do 40 k = 1, m\n    a(1, k) = real(k)\n40 continue');
  });

  it('leaves a while loop without a step counter without variable and bounds; its count is a named symbol', () => {
    // `s = s + 1.0` steps a real, which is no counter: the count stays a symbol named after the
    // procedure and the loop's rank in it, so a binding survives lines added above it.
    const [l] = byLine(21);
    expect([l.variable, l.lower, l.upper]).toEqual([undefined, undefined, undefined]);
    expect(l.tripSymbol).toBe('trips_loops_1');
    expect(S.toString(l.tripCount!)).toBe('trips_loops_1');
    expect(l.header.startsWith('do')).toBe(true);
  });

  it('reads the step counter of a bare DO that leaves through exit', () => {
    const [l] = byLine(38);
    expect(l.variable).toBe('k');
    // The exit test bounds the count; the model names both C `break` and Fortran `exit` 'break'.
    expect(l.counter?.boundFrom).toBe('break');
    expect(l.counter?.boundText).toBe('k > n');
    expect(l.tripCountIsBound).toBeUndefined();
  });

  it('marks a counted loop with an exit of its own as an upper bound', () => {
    // `exit inner` may leave the inner loop early (Fortran 2008 §8.1.10, from memory).
    const [inner] = byLine(25);
    expect(inner.tripCountIsBound).toBe(true);
    // `cycle outer` only ends a pass of the outer loop early; its count stays exact.
    expect(byLine(24)[0].tripCountIsBound).toBeUndefined();
  });

  it('declares the dummy arguments in argument order', () => {
    expect(p.params.map((d) => `${d.name}:${d.scope}`)).toEqual(['a:param', 'n:param', 'm:param']);
    expect(p.params[0].dims.map((d) => S.toString(d))).toEqual(['n', 'm']);
  });
});
