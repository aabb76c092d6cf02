/**
 * Fortran front end: branches. IF constructs with ELSE IF arms become nested IfStmts, one-line IF
 * statements become an IfStmt with one statement, SELECT CASE becomes an IfStmt chain, and the
 * every-K-steps guard `if (mod(t, K) == 0)` keeps `mod` as a call so analyses can read K.
 */
import { describe, expect, it } from 'vitest';
import type { IfStmt, LoopStmt } from '../../server/src/core/model/program';
import { accessesOfStatement } from '../../server/src/core/model/values';
import { fixtureText, load, outline, proc, show, span, textAt } from '../fixtures/fortran/check';

describe('IF and SELECT CASE (control.f90)', () => {
  const m = load('control.f90');
  const text = fixtureText('control.f90');
  const p = proc(m, 'control');
  const time = p.body[2] as LoopStmt;

  it('reads the time loop body', () => {
    expect(time.kind).toBe('loop');
    expect(outline(time.body)).toEqual([
      'do i = 1, nx (trips nx)',
      '  h(i) = h(i) + 1.0d0',
      // Fortran 2008 §8.1.7.2 (from memory): ELSE IF arms are tried in order, so each one sits in
      // the previous arm's otherwise.
      'if mod(t, 100) == 0',
      // A whole array passed to an intrinsic is every element read: the section h(:).
      '  total = total + sum(h(:))',
      'else',
      '  if t > 400',
      '    total = total - 1.0d0',
      '  else',
      '    total = total + h(1)',
      // Fortran 2008 §8.1.7.4 (from memory): IF (expr) action-stmt.
      'if h(1) > 1.0d3',
      '  h(1) = 0.0d0',
      'kind_of_step = mod(t, 7)',
      // Fortran 2008 §8.1.8.2 (from memory): a case value range lo:hi matches lo <= s <= hi, lo: matches
      // s >= lo, and CASE DEFAULT runs only when no other case matches, wherever it is written.
      'if kind_of_step == 0',
      '  h(2) = 0.0d0',
      'else',
      '  if ((kind_of_step >= 1) && (kind_of_step <= 3)) || (kind_of_step == 5)',
      '    h(4) = 2.0d0',
      '  else',
      '    if kind_of_step >= 6',
      '      h(5) = 3.0d0',
      '    else',
      '      h(3) = h(3) + 1.0d0',
    ]);
  });

  it('keeps the mod(t, K) == 0 guard as a call to mod compared with 0', () => {
    const guard = time.body[1] as IfStmt;
    expect(guard.kind).toBe('if');
    expect(guard.conditionText).toBe('mod(t, 100) == 0');
    expect(guard.condition.kind === 'bin' && guard.condition.op).toBe('==');
    const left = guard.condition.kind === 'bin' ? guard.condition.left : undefined;
    expect(left?.kind === 'call' && left.name).toBe('mod');
    expect(left?.kind === 'call' && left.args.map(show)).toEqual(['t', '100']);
  });

  it('reads a whole array passed to sum() as a section access covering every element', () => {
    const guard = time.body[1] as IfStmt;
    const acc = accessesOfStatement(guard.then[0]);
    expect(acc.map((a) => [a.array, a.subscripts, a.subscriptText, a.isRead, textAt(text, a.range)])).toEqual([['h', [undefined], [':'], true, 'h']]);
  });

  it('gives the IF construct and its ELSE IF arm ranges up to END IF', () => {
    const guard = time.body[1] as IfStmt;
    expect(span(guard.range)).toBe('13:4-19:10');
    expect(textAt(text, guard.range).split('\n').pop()).toBe('    end if');
    expect(span(guard.otherwise[0].range)).toBe('15:4-19:10');
  });

  it('gives the one-line IF the whole line and its statement its own range', () => {
    const one = time.body[2] as IfStmt;
    expect(textAt(text, one.range)).toBe('if (h(1) > 1.0d3) h(1) = 0.0d0');
    expect(textAt(text, one.then[0].range)).toBe('h(1) = 0.0d0');
    const write = one.then[0];
    expect(write.kind === 'assign' && write.target.kind === 'index' && write.target.access.isWrite).toBe(true);
  });

  it('starts the SELECT CASE chain at SELECT and each later arm at its CASE', () => {
    const select = time.body[4] as IfStmt;
    expect(textAt(text, select.range).split('\n')[0]).toBe('select case (kind_of_step)');
    expect(textAt(text, select.otherwise[0].range).split('\n')[0]).toBe('case (1:3, 5)');
    expect(span(select.range).endsWith('31:14')).toBe(true);
  });

  it('reads array elements in a WRITE list as reads', () => {
    const w = p.body[3];
    expect(w.kind).toBe('other');
    const values = w.kind === 'other' ? w.values : [];
    expect(values.map(show)).toEqual(['total', 'h(nx)']);
    const h = values[1];
    expect(h.kind === 'index' && [h.access.isRead, h.access.isWrite]).toEqual([true, false]);
    expect(h.kind === 'index' && textAt(text, h.access.range)).toBe('h(nx)');
  });

  it('binds the program PARAMETERs file-wide and in the program', () => {
    expect([...m.bindings.keys()]).toEqual(['nsteps', 'nx']);
    expect([...p.bindings.keys()]).toEqual(['nsteps', 'nx']);
  });
});
