/**
 * Opening one file of a large project (issue 15): the editor's first diagnostics need only the
 * files the document reaches by name (core/project/lexicon.ts), not a model of every file. The
 * job (lsp/analysis/job.ts) gives a first view after modelling those, and then its own view with
 * the whole project; the two are checked against each other and against the CLI on the folder.
 * The lexicon is checked on the idioms of C, C++ and Fortran codes found in public stencil
 * mini-apps (written here from scratch): braces on their own line, `static inline`, methods
 * defined as `Class::name(…) const`, constructors with initialiser lists, Fortran prefixes
 * (`pure`, `integer function`), `module procedure`, fixed-form comment lines.
 */
import { mkdirSync, mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { filesNeeded, lexiconOf } from '../server/src/core/project/lexicon';
import { type AnalysisJob, firstNeighbours, modelCacheStats, runJob } from '../server/src/lsp/analysis/job';
import { neighbourSources } from '../server/src/lsp/analysis/neighbours';
import type { DocumentView } from '../server/src/lsp/view/types';
import { grammarsForTests, runCli } from './helpers';
import type { Grammars } from '../server/src/grammars';

describe('lexicon: what a file defines and mentions, without parsing', () => {
  it('C: definitions with the brace on its own line, static inline, K&R-ish layouts; not calls, prototypes or keywords', () => {
    const l = lexiconOf(
      [
        '#include "grid.h"',
        'static inline double avg4(const double *restrict u, int i, int n)',
        '{',
        '  return 0.25 * (u[i - 1] + u[i + 1] + u[i - n] + u[i + n]);',
        '}',
        'void relax(double *u, double *w, int n);   /* prototype: not a definition */',
        'void relax(double *u,',
        '           double *w, int n) {',
        '  for (int i = n; i < n * (n - 1); i++) { if (i % n) w[i] = avg4(u, i, n); }',
        '  // apply_bc(u) in a comment is no call',
        '  puts("halo_exchange(u)");',
        '}',
      ].join('\n'),
      'c',
    );
    expect([...l.defines].sort()).toEqual(['avg4', 'relax']);
    expect(l.words.has('avg4')).toBe(true);
    expect(l.words.has('apply_bc')).toBe(false);
    expect(l.words.has('halo_exchange')).toBe(false);
  });

  it('C++: methods by their last name, const and noexcept, constructors with initialiser lists, lambdas are not definitions', () => {
    const l = lexiconOf(
      [
        'Solver::Solver(int nx, int ny) : nx_(nx), ny_(ny), u_(nx * ny) {}',
        'void Solver::step(double dt) noexcept {',
        '  auto at = [&](int i, int j) { return u_[j * nx_ + i]; };',
        '  kernels::diffuse(u_.data(), nx_, ny_, dt);',
        '}',
        'double Solver::energy() const { return 0.0; }',
      ].join('\n'),
      'cpp',
    );
    expect([...l.defines].sort()).toEqual(['Solver', 'energy', 'step']);
    expect(l.words.has('diffuse')).toBe(true);
  });

  it('Fortran: prefixes, typed functions, modules (not module procedure), names in any case, comments', () => {
    const free = lexiconOf(
      [
        'MODULE Fields',
        '  implicit none',
        '  real(8), allocatable :: U(:,:)',
        '  interface smooth',
        '    module procedure smooth2d',
        '  end interface',
        'contains',
        '  pure subroutine Smooth2D(a, n)',
        '  end subroutine',
        '  integer function count_wet(h) ! call flood(h) here is a comment',
        '  end function count_wet',
        'end module fields',
      ].join('\n'),
      'fortran',
      'fields.f90',
    );
    expect([...free.defines].sort()).toEqual(['count_wet', 'fields', 'smooth2d']);
    expect(free.words.has('u')).toBe(true);
    expect(free.words.has('flood')).toBe(false);
    const fixed = lexiconOf(['C     CALL RELAX(U) is a comment line', '      SUBROUTINE STEP(U)', '      CALL SWEEP(U)', '      END'].join('\n'), 'fortran', 'old.f');
    expect([...fixed.defines]).toEqual(['step']);
    expect(fixed.words.has('relax')).toBe(false);
    expect(fixed.words.has('sweep')).toBe(true);
  });

  it('files needed: down the calls and uses, up the callers, nothing else', () => {
    const lex = (t: string, name: string) => ({ path: name, lexicon: lexiconOf(t, 'c') });
    const files = [
      lex('int main(void) { for (int t = 0; t < 9; t++) run(); return 0; }', 'main.c'),
      lex('void run(void) { relax(); }', 'run.c'),
      lex('void relax(void) { smooth(); }', 'relax.c'),
      lex('void smooth(void) { }', 'smooth.c'),
      lex('void unrelated(void) { }', 'other.c'),
    ];
    const doc = files[2].lexicon;
    const need = filesNeeded(doc, files.filter((f) => f.path !== 'relax.c'));
    expect([...need.down]).toEqual(['smooth.c']);
    expect([...need.up]).toEqual(['main.c', 'run.c']);
  });
});

/** A C project: a main with a time loop over kernels in their own files, and files nothing calls. */
function project(kernels: number, unrelated: number): string {
  const dir = mkdtempSync(join(tmpdir(), 'ol-index-'));
  mkdirSync(join(dir, 'src'));
  const N = 'NX*NY';
  writeFileSync(join(dir, 'src', 'sizes.h'), '#define NX 256\n#define NY 128\n#define STEPS 50\n');
  for (let k = 0; k < kernels; k++) {
    // Kernel 0 brings `w` back to the host every call (a transfer inside the caller's time loop).
    writeFileSync(join(dir, 'src', `k${k}.c`), [
      '#include "sizes.h"',
      `void kernel_${k}(double *restrict u, double *restrict w)`,
      '{',
      `#pragma acc parallel loop present(u[0:${N}], w[0:${N}])`,
      `  for (int i = 1; i < ${N} - 1; i++)`,
      `    w[i] = 0.5 * (u[i - 1] + u[i + 1]) + ${k}.0e-6;`,
      ...(k === 0 ? [`#pragma acc update self(w[0:${N}])`] : []),
      '}',
      '',
    ].join('\n'));
  }
  for (let k = 0; k < unrelated; k++) {
    writeFileSync(join(dir, 'src', `tool${k}.c`), `#include "sizes.h"\nvoid tool_${k}(double *v)\n{\n  for (int i = 0; i < NX; i++)\n    v[i] = ${k}.0;\n}\n`);
  }
  writeFileSync(join(dir, 'src', 'main.c'), [
    '#include <stdlib.h>',
    '#include "sizes.h"',
    ...Array.from({ length: kernels }, (_, k) => `void kernel_${k}(double *restrict u, double *restrict w);`),
    'int main(void)',
    '{',
    `  double *u = calloc(${N}, sizeof *u), *w = calloc(${N}, sizeof *w);`,
    `#pragma acc data copy(u[0:${N}]) create(w[0:${N}])`,
    '  for (int t = 0; t < STEPS; t++) {',
    ...Array.from({ length: kernels }, (_, k) => `    kernel_${k}(u, w);`),
    '  }',
    '  free(u); free(w);',
    '  return 0;',
    '}',
    '',
  ].join('\n'));
  return dir;
}

describe('the first view of a document in a project', () => {
  let grammars: Grammars;
  let dir: string;
  const KERNELS = 6;
  const UNRELATED = 10;
  beforeAll(async () => {
    grammars = await grammarsForTests();
    dir = project(KERNELS, UNRELATED);
  });

  const job = (file: string): AnalysisJob => {
    const path = join(dir, 'src', file);
    return {
      uri: `file://${path}`, version: 1, path, language: 'c', text: readFileSync(path, 'utf8'),
      bindings: [], baseline: 'auto', neighbours: neighbourSources(path, 'c', () => undefined),
      view: { profileName: 'test', baseline: 'auto', severity: {}, codeLens: false, inlayHints: false, docsHref: '' },
    };
  };
  /** Runs a job, counting the models built before its first view and in all. */
  const run = (j: AnalysisJob): { early?: DocumentView; earlies: number; builtAtEarly?: number; final: DocumentView; built: number } => {
    const start = modelCacheStats.built;
    let early: DocumentView | undefined;
    let builtAtEarly: number | undefined;
    let earlies = 0;
    const final = runJob(j, grammars, {
      early: (v) => {
        earlies++;
        if (early) return;
        early = v;
        builtAtEarly = modelCacheStats.built - start;
      },
    });
    return { early, earlies, builtAtEarly, final, built: modelCacheStats.built - start };
  };
  const codes = (v: DocumentView): string[] => v.diagnostics.map((d) => `${d.code}@${d.range.start.line + 1}`).sort();

  it('a kernel: only its caller is modelled first; the first view is the final one when no caller finding lands in it', () => {
    const j = job('k3.c');
    expect(firstNeighbours(j).first.map((n) => n.path.split('/').pop())).toEqual(['main.c']);
    const r = run(j);
    expect(r.builtAtEarly).toBe(1);
    // Every other source and the header beside them.
    expect(r.built).toBe(KERNELS + UNRELATED + 1);
    expect(r.early).toBeDefined();
    expect(codes(r.early!)).toEqual(codes(r.final));
  });

  it('the kernel that updates: its twin of the transfer in the caller\'s time loop comes with the final view', () => {
    const r = run(job('k0.c'));
    // k0's model was built by the previous test, so only what it did not build remains.
    expect(r.early).toBeDefined();
    expect(codes(r.early!)).not.toContain('transfer-in-time-loop@7');
    expect(codes(r.final)).toContain('transfer-in-time-loop@7');
    // The final view is the CLI's for the folder.
    const cli = JSON.parse(runCli(['check', '--format', 'json', join(dir, 'src')]).stdout).files.find((f: { path: string }) => f.path.endsWith('/k0.c'));
    expect(codes(r.final)).toEqual(cli.findings.map((f: { code: string; line: number }) => `${f.code}@${f.line}`).sort());
  });

  it('the main program: its kernels first (not the unrelated files), and the same findings as the final view', () => {
    const fresh = project(KERNELS, UNRELATED);
    dir = fresh;
    const j = job('main.c');
    expect(firstNeighbours(j).first).toHaveLength(KERNELS);
    const r = run(j);
    expect(r.builtAtEarly).toBe(KERNELS);
    // Every other source and the header beside them.
    expect(r.built).toBe(KERNELS + UNRELATED + 1);
    expect(codes(r.early!)).toEqual(codes(r.final));
    expect(codes(r.final)).toContain(`transfer-in-time-loop@${KERNELS + 8}`);
  });

  it('once the project is modelled, the document\'s own findings come before its callers are analysed', () => {
    const r = run(job('k2.c'));
    // Only the file that was the document before had no model; it is the caller, so nothing
    // comes before it is built, and then the kernel's own view comes before the caller's analysis.
    expect(r.built).toBe(1);
    expect(r.earlies).toBe(1);
    expect(r.builtAtEarly).toBe(1);
    expect(codes(r.early!)).toEqual(codes(r.final));
  });

  it('a file nothing calls and that calls nothing of the project: once warm, its diagnostics go out first (no caller to wait for), then the full view', () => {
    const r = run(job('tool3.c'));
    expect(r.earlies).toBe(1);
    expect(r.built).toBe(0);
    expect(r.early!.diagnostics).toEqual(r.final.diagnostics);
    // The early view carries the diagnostics only.
    expect(r.early!.cards).toEqual([]);
  });
});

describe('a file sees the procedures of the workspace it reaches', () => {
  it('keeps its callees and the chains calling it, every procedure of an ambiguous C++ name, and nothing else', async () => {
    const g = await grammarsForTests();
    const { buildModel } = await import('../server/src/core/analyze');
    const { withWorkspace } = await import('../server/src/core/model/workspace');
    const deps = { ...g, readInclude: () => undefined };
    const files: [string, string][] = [
      ['main.cpp', 'void run(double *u);\nint main() { double u[8]; for (int t = 0; t < 9; t++) run(u); return 0; }\n'],
      ['run.cpp', 'void relax(double *u);\nvoid run(double *u) { relax(u); }\n'],
      ['relax.cpp', 'struct W { void step(double *u); };\nvoid relax(double *u) { W w; w.step(u); }\n'],
      ['a.cpp', 'struct A { void step(double *u); };\nvoid A::step(double *u) { u[0] = 1.0; }\n'],
      ['b.cpp', 'struct B { void step(double *u); };\nvoid B::step(double *u) { u[1] = 2.0; }\n'],
      ['tool.cpp', 'void tool(double *v) { v[0] = 0.0; }\n'],
    ];
    const models = files.map(([path, text]) => buildModel({ path, text, language: 'cpp' }, deps));
    const names = (m: { procedures: { name: string; origin?: string }[] }): string[] => m.procedures.filter((p) => p.origin).map((p) => p.name).sort();
    const relax = models[2];
    // Down: `w.step` may be A::step or B::step (ambiguous in the workspace): both stay. Up: run, main.
    expect(names(withWorkspace(relax, models, 'calls'))).toEqual(['A::step', 'B::step', 'main', 'run']);
    expect(names(withWorkspace(relax, models, 'all'))).toEqual(['A::step', 'B::step', 'main', 'run', 'tool']);
    // A file nothing calls and that calls nothing of the workspace sees none of it.
    expect(names(withWorkspace(models[5], models, 'calls'))).toEqual([]);
  });
});
