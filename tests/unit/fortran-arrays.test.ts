/**
 * Fortran front end: array syntax as implied loops. `_i1` walks the first section dimension and
 * is the innermost loop (column-major order), `_i2` the second, and so on. Operands of the same
 * shape become element references relative to the target's section. Standard clauses are quoted
 * from memory, so every citation says so.
 */
import { describe, expect, it } from 'vitest';
import { buildFortranModel } from '../../server/src/core/frontend/fortran';
import type { IfStmt, LoopStmt } from '../../server/src/core/model/program';
import { accessesOfStatement, walkStatements } from '../../server/src/core/model/values';
import * as S from '../../server/src/core/symbolic';
import { fixtureText, load, outline, proc, showAccess, span, textAt } from '../fixtures/fortran/check';

describe('array syntax (arrays.f90)', () => {
  const m = load('arrays.f90');
  const text = fixtureText('arrays.f90');
  const p = proc(m, 'arrays');

  it('turns sections, whole arrays, WHERE and FORALL into loops', () => {
    expect(outline(p.body)).toEqual([
      // a(2:n-1) = b(1:n-2) + b(3:n): one element per section position (Fortran 2008 §7.2.1.3, from memory).
      'do _i1 = 2, n - 1 (trips n - 2) implied',
      '  a(_i1) = b(_i1 - 1) + b(_i1 + 1)',
      // Whole arrays run over their declared bounds.
      'do _i1 = 1, n (trips n) implied',
      '  f(_i1) = a(_i1) + (2.0d0 * b(_i1))',
      // c is declared c(0:n+1, 3): a scalar subscript keeps its dimension out of the loop nest.
      'do _i1 = 1, n (trips n) implied',
      '  c(_i1, 2) = c(_i1 - 1, 1) - c(_i1 + 1, 3)',
      // `:` means the declared bounds, here 0 to n + 1 (Fortran 2008 §6.5.3.3.2, from memory).
      'do _i1 = 0, n + 1 (trips n + 2) implied',
      '  c(_i1, 1) = 0.0d0',
      // a(1:n:2) = b(2:n:2): element k of both sections is a(1 + 2k) = b(2 + 2k).
      'do _i1 = 1, n step 2 (trips (n - 1)/2 + 1) implied',
      '  a(_i1) = b(_i1 + 1)',
      // sum() is transformational, so its section stays a section and s stays a scalar.
      's = sum(a(1:n))',
      'a(n) = s',
      'do _i1 = 1, n (trips n) implied',
      '  wet(_i1) = b(_i1) > 0.0d0',
      // WHERE / ELSEWHERE (mask) / ELSEWHERE (Fortran 2008 §7.2.3, from memory): the masks are tested per element.
      'do _i1 = 1, n (trips n) implied',
      '  if b(_i1) > 0.0d0',
      '    a(_i1) = sqrt(b(_i1))',
      '  else',
      '    if b(_i1) < -1.0d0',
      '      a(_i1) = -1.0d0',
      '    else',
      '      a(_i1) = 0.0d0',
      'do _i1 = 1, n (trips n) implied',
      '  if wet(_i1)',
      '    f(_i1) = f(_i1) + 1.0d0',
      // FORALL has its own index (Fortran 2008 §7.2.4, from memory), so its loop is not implied.
      'do i = 1, n (trips n)',
      '  if a(i) != 0.0d0',
      '    b(i) = 1.0d0 / a(i)',
    ]);
  });

  it('gives implied loops the statement as keyword range and marks them implied', () => {
    const first = p.body[0] as LoopStmt;
    expect(first.implied).toBe(true);
    expect(span(first.keywordRange)).toBe(span(first.range));
    expect(textAt(text, first.range)).toBe('a(2:n-1) = b(1:n-2) + b(3:n)');
    expect(first.header).toBe('a(2:n-1) = b(1:n-2) + b(3:n)');
  });

  it('keeps the source ranges of the rewritten references', () => {
    const first = p.body[0] as LoopStmt;
    const accesses = accessesOfStatement(first.body[0]);
    expect(accesses.map((a) => `${showAccess(a)} ${a.isWrite ? 'W' : 'R'} ${textAt(text, a.range)}`)).toEqual([
      'a(_i1) W a(2:n-1)',
      'b(_i1 - 1) R b(1:n-2)',
      'b(_i1 + 1) R b(3:n)',
    ]);
    const whole = p.body[1] as LoopStmt;
    const inner = whole.body[0];
    expect(accessesOfStatement(inner).map((a) => textAt(text, a.range))).toEqual(['f', 'a', 'b']);
  });

  it('nests several section dimensions with _i1 innermost', () => {
    const src = 'subroutine s(u, n, m)\n  integer :: n, m\n  real :: u(n, m), v(n, m)\n  u(2:n-1, 2:m-1) = v(1:n-2, 3:m)\nend subroutine s\n';
    const q = proc(buildFortranModel(src, 'inline.f90'), 's');
    expect(outline(q.body)).toEqual([
      'do _i2 = 2, m - 1 (trips m - 2) implied',
      '  do _i1 = 2, n - 1 (trips n - 2) implied',
      '    u(_i1, _i2) = v(_i1 - 1, _i2 + 1)',
    ]);
  });

  it('gives a WHERE construct the range from WHERE to END WHERE and each arm its own start', () => {
    const where = p.body[8] as LoopStmt;
    expect(textAt(text, where.range).split('\n')).toHaveLength(7);
    const test = where.body[0] as IfStmt;
    expect(textAt(text, test.otherwise[0].range).split('\n')[0]).toBe('elsewhere (b < -1.0d0)');
  });

  it('leaves scalar targets scalar', () => {
    const kinds: string[] = [];
    walkStatements(p.body, (s) => {
      if (s.kind === 'assign' && s.target.kind === 'var') kinds.push(s.target.name);
    });
    // Fortran 2008 §7.2.1.3 (from memory): only an array variable on the left makes an array assignment.
    expect(kinds).toEqual(['s']);
  });

  it('evaluates the strided section with a binding', () => {
    const strided = p.body[4] as LoopStmt;
    // INT((101 - 1 + 2)/2) = 51 elements for n = 101.
    expect(S.evaluate(strided.tripCount!, new Map([['n', S.num(101)]]))).toBe(51);
  });
});
