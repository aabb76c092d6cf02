/**
 * Fortran front end: declarations. Element types and kinds, array shapes of dummy arguments and
 * allocatable arrays, modules with use association, functions and internal procedures. Kind
 * numbers are byte sizes as gfortran numbers them (common practice); standard clauses are quoted
 * from memory, so every citation says so.
 */
import { describe, expect, it } from 'vitest';
import type { Declaration, LoopStmt } from '../../server/src/core/model/program';
import { buildFortranModel } from '../../server/src/core/frontend/fortran';
import * as S from '../../server/src/core/symbolic';
import { fixtureText, load, loops, outline, proc, show, span, textAt } from '../fixtures/fortran/check';

const dims = (d: Declaration | undefined) => d?.dims.map((x) => S.toString(x));
const lower = (d: Declaration | undefined) => d?.lowerBounds?.map((x) => S.toString(x));

describe('element types and kinds (kinds.f90)', () => {
  const m = load('kinds.f90');
  const g = (name: string) => m.globals.find((d) => d.name === name);

  it.each([
    // Fortran 2008 §4.4.2.3 (from memory): default real is one numeric storage unit (4 bytes here).
    ['r_default', 'float', 4], ['r4', 'float', 4], ['r_star4', 'float', 4], ['r_kind4', 'float', 4],
    // Double precision is two storage units (Fortran 2008 §4.4.2.3, from memory).
    ['r8', 'double', 8], ['r_double', 'double', 8], ['r_star8', 'double', 8],
    // kind(1.0d0) is the double precision kind (Fortran 2008 §13.7.89, from memory).
    ['r_dp', 'double', 8],
    // selected_real_kind(15, 307) is the 8-byte kind and selected_real_kind(6) the 4-byte kind in
    // gfortran (from memory).
    ['r_wp', 'double', 8], ['r_lowp', 'float', 4],
    // iso_fortran_env real64/real32 (Fortran 2008 §13.8.2.1, from memory).
    ['r_real64', 'double', 8], ['r_real32', 'float', 4], ['r_eight', 'double', 8],
    // A complex has two reals of its kind (Fortran 2008 §4.4.2.4, from memory).
    ['c_default', 'complex-float', 8], ['c8', 'complex-double', 16], ['c_double', 'complex-double', 16], ['c_star16', 'complex-double', 16],
    ['i_default', 'int', 4], ['i8', 'long', 8], ['i_int64', 'long', 8],
    // selected_int_kind(12) needs 8 bytes (10**12 > 2**31).
    ['i_ik', 'long', 8],
    // Default logical has the size of default integer (Fortran 2008 §4.4.4, from memory).
    ['flags', 'logical', 4],
  ])('%s is %s of %i bytes', (name, type, bytes) => {
    expect(g(name)?.type.name).toBe(type);
    expect(g(name)?.type.bytes).toBe(bytes);
  });

  it('binds the kind parameters', () => {
    expect(['dp', 'sp', 'wp', 'lowp', 'ik', 'eight'].map((k) => S.toString(m.bindings.get(k)!))).toEqual(['8', '4', '8', '4', '8', '8']);
  });

  it('types every literal', () => {
    const p = proc(m, 'literals');
    const a = p.body[0];
    const nums: string[] = [];
    const walk = (v: import('../../server/src/core/model/program').VExpr): void => {
      if (v.kind === 'bin') {
        walk(v.left);
        walk(v.right);
      } else if (v.kind === 'num') nums.push(`${v.text}:${v.isFloat ? v.bytes : 'int'}`);
    };
    if (a.kind === 'assign') walk(a.value);
    // Fortran 2008 §4.4.2.3 (from memory): an E exponent or none is default real, D is double precision,
    // and _k gives kind k; integer literals stay integers.
    expect(nums).toEqual(['1.0:4', '1.0d0:8', '1.0e0:4', '1.0_8:8', '1.0_dp:8', '2.5_sp:4', '1.5e-3_wp:8', '1d0:8', '10:int', '10_8:int']);
  });
});

describe('array shapes (shapes.f90)', () => {
  const m = load('shapes.f90');
  const p = proc(m, 'shapes');
  const param = (n: string) => p.params.find((d) => d.name === n);

  it('reads explicit, assumed-shape and assumed-size dummies', () => {
    // Fortran 2008 §5.3.8.3 (from memory): an assumed-shape array takes its extents from the actual
    // argument, so they stay symbols; a lower bound may still be written.
    expect(dims(param('a'))).toEqual(['extent(a,1)', 'extent(a,2)']);
    expect(lower(param('a'))).toBeUndefined();
    expect(dims(param('b'))).toEqual(['extent(b,1)', 'extent(b,2)']);
    expect(lower(param('b'))).toEqual(['0', '1']);
    // Fortran 2008 §5.3.8 (from memory): the last extent of an assumed-size array is unknown.
    expect(dims(param('c'))).toEqual(['n', 'extent(c,2)']);
    expect(dims(param('e'))).toEqual(['extent(e,1)']);
    // Fortran 2008 §5.3.8.2 (from memory): extent = upper - lower + 1.
    expect(dims(param('d'))).toEqual(['n + 3', 'm - 1']);
    expect(lower(param('d'))).toEqual(['-1', '2']);
    expect(S.toString(param('d')!.elementCount!)).toBe('m*n + 3*m - n - 3');
    expect(p.params.map((d) => d.name)).toEqual(['a', 'b', 'c', 'd', 'e', 'n', 'm']);
    expect(p.params.every((d) => d.scope === 'param')).toBe(true);
  });

  it('reads a local explicit-shape array', () => {
    const local = p.locals.find((d) => d.name === 'local');
    expect(dims(local)).toEqual(['10', '2*n']);
    expect(S.toString(local!.elementCount!)).toBe('20*n');
  });

  it('takes a loop bound written as size(a, 1) from the declaration', () => {
    const [l] = loops(p.body);
    expect(S.toString(l.tripCount!)).toBe('extent(a,1)');
  });

  it('gives allocatable arrays the extents of their allocate statement', () => {
    const u = m.globals.find((d) => d.name === 'u');
    const w = m.globals.find((d) => d.name === 'w');
    expect([dims(u), lower(u), S.toString(u!.elementCount!)]).toEqual([['nx', 'ny'], undefined, 'nx*ny']);
    expect([dims(w), lower(w)]).toEqual([['nx + 5'], ['-2']]);
    expect(u?.isArray).toBe(true);
    expect(u?.isPointer).toBe(false);
  });

  it('keeps deferred extents symbolic when nothing allocates them', () => {
    const never = m.globals.find((d) => d.name === 'never');
    expect(dims(never)).toEqual(['extent(never,1)', 'extent(never,2)', 'extent(never,3)']);
    const ptr = m.globals.find((d) => d.name === 'p');
    expect([ptr?.isPointer, ptr?.isArray]).toEqual([true, true]);
  });

  it('records the allocate bounds as the statement values', () => {
    const setup = proc(m, 'setup');
    expect(setup.body[0].kind === 'other' && setup.body[0].values.map(show)).toEqual(['nx', 'ny', '-2', 'nx + 2']);
  });
});

describe('modules, use association and procedures (modules.f90)', () => {
  const m = load('modules.f90');
  const text = fixtureText('modules.f90');

  it('lists the procedures in source order, internal ones after their host', () => {
    expect(m.procedures.map((p) => p.name)).toEqual(['level_at', 'damp', 'relax', 'main', 'smooth']);
  });

  it('makes module variables globals and skips derived types and interface bodies', () => {
    // Components of a derived type and dummies of an interface body declare nothing here.
    expect(m.globals.map((d) => d.name)).toEqual(['nx', 'ny', 'halo', 'h', 'depth', 'nsteps']);
    expect(m.globals.every((d) => d.scope === 'global')).toBe(true);
  });

  it('binds module PARAMETERs and a module variable with a literal initialisation never reassigned', () => {
    expect([...m.bindings].map(([k, v]) => `${k}=${S.toString(v)}`)).toEqual(['nx=600', 'ny=400', 'halo=1', 'nsteps=1000']);
  });

  it('sees module arrays through use, also under a rename', () => {
    // Fortran 2008 §11.2.2 (from memory): `local => remote` makes the module entity known by the local
    // name; the access names the module's declaration so that its extents can be found.
    const relax = proc(m, 'relax');
    expect(outline(relax.body)).toEqual([
      'do j = 1, ny (trips ny)',
      '  do i = 1, nx (trips nx)',
      '    h(i, j) = 0.5d0 * (h(i, j) + depth(i, j))',
      'if n > 1',
      '  call relax(n - 1)',
    ]);
  });

  it('reads prefixed functions and their result variables', () => {
    const levelAt = proc(m, 'level_at');
    expect(levelAt.locals.map((d) => `${d.name}:${d.type.name}`)).toEqual(['level_at:double']);
    expect(span(levelAt.nameRange)).toBe('17:24-17:32');
    expect(textAt(text, levelAt.nameRange)).toBe('level_at');
    const damp = proc(m, 'damp');
    expect(damp.locals.map((d) => `${d.name}:${d.type.name}`)).toEqual(['y:double']);
    expect(damp.params.map((d) => d.name)).toEqual(['x']);
  });

  it('gives internal procedures their host’s arrays and the host’s range', () => {
    const main = proc(m, 'main');
    const smooth = proc(m, 'smooth');
    expect(outline(smooth.body)).toEqual(['do i = 1, nx (trips nx)', '  h(i, 1) = h(i, 2)']);
    expect(textAt(text, main.range).split('\n').pop()).toBe('end program main');
    expect(main.range.end.line).toBeGreaterThan(smooth.range.end.line);
  });

  it('sizes the allocatable array at its allocate and loops whole-array assignments over it', () => {
    const main = proc(m, 'main');
    const h = m.globals.find((d) => d.name === 'h');
    expect([dims(h), lower(h)]).toEqual([['nx + 2', 'ny'], ['0', '1']]);
    const whole = main.body[1] as LoopStmt;
    expect(outline([whole])).toEqual([
      'do _i2 = 1, ny (trips ny) implied',
      '  do _i1 = 0, nx + 1 (trips nx + 2) implied',
      '    h(_i1, _i2) = 0.0d0',
    ]);
    // With nx = 600 and ny = 400 the whole array has 602 * 400 elements.
    expect(S.evaluate(S.mul(whole.tripCount!, (whole.body[0] as LoopStmt).tripCount!), m.bindings)).toBe(240800);
  });

  it('reads function references as calls, not array elements', () => {
    const main = proc(m, 'main');
    const print = main.body[4];
    expect(print.kind === 'other' && print.values.map(show)).toEqual(['level_at(1, 1)', 'damp(h(1, 1))']);
  });
});

describe('arrays of modules outside the file', () => {
  // The module `remote_grid` is in another file, so nothing here declares h, u or f.
  const src = [
    'subroutine sweep(n)',
    '  use remote_grid',
    '  integer :: n, i',
    '  !$acc parallel loop present(h)',
    '  do i = 2, n',
    '    h(i) = h(i - 1) + f(i)',
    '  end do',
    '  u(1:n) = 0.0',
    'end subroutine sweep',
  ].join('\n');
  const p = buildFortranModel(src, 'sweep.f90').procedures[0];

  it('reads names that a directive moves as data, and names with section subscripts, as arrays', () => {
    expect(outline(p.body)).toEqual([
      'do i = 2, n (trips n - 1) [parallel loop]',
      // f is named by no directive and takes no section, so it stays a function reference.
      '  h(i) = h(i - 1) + f(i)',
      // The section's written bounds give the implied loop even without a declaration.
      'do _i1 = 1, n (trips n) implied',
      '  u(_i1) = 0.0',
    ]);
    const assign = (p.body[0] as LoopStmt).body[0];
    expect(assign.kind === 'assign' && assign.target.kind).toBe('index');
    expect(assign.kind === 'assign' && assign.value.kind === 'bin' && assign.value.right.kind).toBe('call');
  });
});
