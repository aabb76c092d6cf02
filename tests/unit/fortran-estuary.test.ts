/**
 * Fortran front end on the estuary demo (examples/estuary): the model the analyses will see.
 * Each port has one time loop in the main program; the resident ports have their data region
 * around it and the updates inside; the host sets the river row with array syntax; the gauge
 * reads one element each step; the snapshot sits behind `if (mod(t, 100) == 0)`. Line numbers
 * are 1-based here, as an editor shows them.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { callSiteBindings, procedureBindings } from '../../server/src/core/analysis/bindings';
import { scanLoops } from '../../server/src/core/analysis/nests';
import { buildFortranModel } from '../../server/src/core/frontend/fortran';
import type { IfStmt, LoopStmt, Stmt } from '../../server/src/core/model/program';
import { accessesOfStatement, walkStatements } from '../../server/src/core/model/values';
import * as S from '../../server/src/core/symbolic';
import { outline, showAccess } from '../fixtures/fortran/check';

const DIR = join(__dirname, '..', '..', 'examples', 'estuary');

interface Port {
  file: string;
  /** Lines of: the data region (resident only), `do t`, the inflow row, the gauge read, the guard. */
  data?: number;
  time: number;
  inflow: number;
  gauge: number;
  guard: number;
  /** Directives inside the time loop: `line construct`. */
  inside: string[];
  kernel: string;
}

const PORTS: Port[] = [
  { file: 'estuary_naive_acc.f90', time: 107, inflow: 109, gauge: 113, guard: 114, inside: [], kernel: 'parallel loop' },
  {
    file: 'estuary_resident_acc.f90', data: 110, time: 111, inflow: 113, gauge: 119, guard: 120,
    inside: ['114 update', '118 update', '121 update'], kernel: 'parallel loop',
  },
  { file: 'estuary_naive_omp.f90', time: 112, inflow: 114, gauge: 118, guard: 119, inside: [], kernel: 'target teams distribute parallel do' },
  {
    file: 'estuary_resident_omp.f90', data: 115, time: 116, inflow: 118, gauge: 124, guard: 125,
    inside: ['119 target update', '123 target update', '126 target update'], kernel: 'target teams distribute parallel do',
  },
];

const line1 = (s: { range: Stmt['range'] }) => s.range.start.line + 1;

describe.each(PORTS)('$file', (port) => {
  const path = join(DIR, port.file);
  const m = buildFortranModel(readFileSync(path, 'utf8'), path);
  const scan = scanLoops(m);

  it('reads without findings and finds one time loop, `do t = 1, nsteps`, in the main program', () => {
    expect(m.findings).toEqual([]);
    expect(scan.timeLoops).toHaveLength(1);
    const tl = scan.timeLoops[0];
    expect([tl.procedure.name, tl.loop.variable, tl.loop.keywordRange.start.line + 1]).toEqual(['estuary', 't', port.time]);
    expect(S.evaluate(tl.loop.tripCount!, m.bindings)).toBe(2000);
  });

  it('puts the resident data region around the time loop', () => {
    const main = m.procedures.find((p) => p.name === 'estuary')!;
    const region = main.body.find((s) => s.kind === 'block');
    if (port.data === undefined) {
      expect(region).toBeUndefined();
      return;
    }
    expect(region && line1(region)).toBe(port.data);
    expect(region?.kind === 'block' && region.body[0].kind === 'loop' && line1(region.body[0])).toBe(port.time);
  });

  it('finds the directives inside the time loop, the inflow row, the gauge read and the snapshot guard', () => {
    const loop = scan.timeLoops[0].loop;
    const inside: string[] = [];
    walkStatements(loop.body, (s) => {
      if (s.kind === 'directive') inside.push(`${line1(s)} ${s.directive.construct}`);
    });
    expect(inside).toEqual(port.inside);
    // The host sets the river row with array syntax: an implied loop over the first dimension.
    const inflow = loop.body[0] as LoopStmt;
    expect([inflow.implied, line1(inflow), inflow.variable, S.toString(inflow.tripCount!)]).toEqual([true, port.inflow, '_i1', 'nx']);
    expect(outline([inflow])).toEqual(['do _i1 = 1, nx (trips nx) implied', '  h(_i1, 1) = river_level(t)']);
    const gauge = loop.body.find((s) => line1(s) === port.gauge)!;
    expect(accessesOfStatement(gauge).map((a) => `${showAccess(a)} ${a.isRead ? 'read' : 'write'}`)).toEqual(['series(t) write', 'h(ig, jg) read']);
    const guard = loop.body.find((s) => s.kind === 'if') as IfStmt;
    expect([line1(guard), guard.conditionText]).toEqual([port.guard, 'mod(t, 100) == 0']);
    // The snapshot prints sum(h): a host read of every element, which the update before it covers.
    const print = guard.then[guard.then.length - 1];
    expect(accessesOfStatement(print).map((a) => `${showAccess(a)} ${a.isRead ? 'read' : 'write'}`)).toEqual(['h(:, :) read']);
  });

  it('attaches the kernels’ directives to their loops and binds the kernel extents through the call', () => {
    const step = m.procedures.find((p) => p.name === 'step')!;
    const kernels = step.body.filter((s): s is LoopStmt => s.kind === 'loop');
    expect(kernels.map((k) => k.directives.map((d) => d.construct))).toEqual([[port.kernel], [port.kernel], [port.kernel]]);
    expect(kernels.map((k) => k.directives[0].clauses.find((c) => c.name === 'collapse')?.value)).toEqual(['2', '2', '2']);
    // Every call passes the module constants nx = 800 and ny = 300 (estuary_config).
    const b = procedureBindings(m, step, new Map(), callSiteBindings(m));
    expect(kernels.map((k) => S.evaluate(S.mul(k.tripCount!, (k.body[0] as LoopStmt).tripCount!), b))).toEqual([240000, 240000, 240000]);
    expect(step.params.map((d) => `${d.name}${d.isArray ? `(${d.dims.map((x) => S.toString(x)).join(',')})` : ''}`)).toEqual([
      'h(nx,ny)', 'u(nx,ny)', 'v(nx,ny)', 'hn(nx,ny)', 'un(nx,ny)', 'vn(nx,ny)', 'nx', 'ny', 'dt',
    ]);
  });

  it('types the fields as real(dp) with dp = kind(1.0d0)', () => {
    const main = m.procedures.find((p) => p.name === 'estuary')!;
    const h = main.locals.find((d) => d.name === 'h')!;
    expect([h.type.name, h.type.bytes, S.evaluate(h.elementCount!, m.bindings)]).toEqual(['double', 8, 240000]);
  });
});
