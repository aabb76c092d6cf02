/**
 * Time loops and step counters (issue 11, "where the data lives"): the fixture programs under
 * tests/fixtures/time-loops/ are compiled and run (their printed step counts confirm the hand
 * counts), then analysed: step counters of while / do-while / bare DO loops, every-K guards on
 * them, time loops found by dependence (swaps, arrays carried from pass to pass) and the loops
 * that are not (tiles, fields, initialisation), the user's mark (annotation comment, setting,
 * `--time-loop`), stable names for unreadable counts, and what the report, text and hover say.
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, readdirSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import * as S from '../server/src/core/symbolic';
import type { FileAnalysis } from '../server/src/core/analyze';
import type { LoopStmt } from '../server/src/core/model/program';
import { walkStatements } from '../server/src/core/model/values';
import { fileReport } from '../server/src/core/report';
import { markedLoopLines } from '../server/src/core/frontend/annotations';
import { stepWork } from '../server/src/core/estimate/step';
import { formatFile } from '../server/src/cli/text';
import { hoverAt } from '../server/src/lsp/features/hover';
import { buildView } from '../server/src/lsp/view/build';
import { languageOfPath } from '../server/src/core/language';
import { analyzeText, runCli } from './helpers';

const DIR = join(__dirname, 'fixtures', 'time-loops');
const at = (f: string): string => join(DIR, f);
const read = (f: string): string => readFileSync(at(f), 'utf8');

async function analyse(f: string, settings: Record<string, unknown> = {}): Promise<FileAnalysis> {
  const a = await analyzeText(read(f), at(f), undefined, undefined, undefined, settings);
  expect(a.internalErrors).toEqual([]);
  return a;
}

/** Per-step bytes of one array in a time loop: each transfer's bytes over its period. */
function perStepOf(a: FileAnalysis, array: string, direction: 'toDevice' | 'toHost'): number {
  const l = a.timeLoops[0].ledger!;
  return l.transfers.filter((t) => t.array === array && t.direction === direction).reduce((s, t) => s + t.bytes.value! / t.everySteps, 0);
}

function loopAt(a: FileAnalysis, line: number): LoopStmt {
  let found: LoopStmt | undefined;
  for (const p of a.model.procedures) {
    walkStatements(p.body, (s) => {
      if (s.kind === 'loop' && s.keywordRange.start.line === line - 1) found ??= s;
    });
  }
  return found!;
}

// ---- the fixture programs compile and run ------------------------------------------------

function have(cmd: string): boolean {
  const r = spawnSync(cmd, ['--version'], { encoding: 'utf8' });
  return !r.error && r.status === 0;
}

const available = new Map(['gcc', 'gfortran'].map((c) => [c, have(c)]));
for (const [cmd, ok] of available) if (!ok) console.log(`skipped: ${cmd} not found, so the time-loop fixtures it builds are not compiled`);

let workDir: string | undefined;
afterAll(() => {
  if (workDir) rmSync(workDir, { recursive: true, force: true });
});

/** What each program prints that confirms a hand count (the step counts of the loops). */
const printed: Record<string, RegExp> = {
  // while (1) … if (step >= NSTEPS) break; step++: entered NSTEPS + 1 = 501 times, each adding rod[0] = 1.
  'break_counter.c': /steps 500, left end total 501\.000/,
  // At most ITER_MAX = 2000 sweeps; at this size the tolerance is not reached first.
  'jacobi_tol.c': /stopped after 2000 sweeps/,
  'relax_while.f90': /steps\s+400/,
  'relax_exit.f90': /steps\s+300/,
};

describe('time-loop fixture programs', () => {
  const programs = readdirSync(DIR).filter((f) => /\.(c|f90)$/.test(f)).sort();
  for (const file of programs) {
    const fortran = languageOfPath(file) === 'fortran';
    const cc = fortran ? 'gfortran' : 'gcc';
    it.skipIf(!available.get(cc))(`${file} compiles with ${cc} and runs`, () => {
      workDir ??= mkdtempSync(join(tmpdir(), 'offload-ledger-time-loops-'));
      const text = read(file);
      const exe = join(workDir, file.replace(/\./g, '_'));
      // OpenACC programs build with -fopenacc, OpenMP target ones with -fopenmp, serial ones with neither.
      const model = /#pragma acc|!\$acc/.test(text) ? ['-fopenacc'] : /omp\s+target/.test(text) ? ['-fopenmp'] : [];
      const args = [...model, '-O2', '-Wall', ...(fortran ? ['-J', workDir] : ['-std=c11']), at(file), '-o', exe, ...(fortran ? [] : ['-lm'])];
      const built = spawnSync(cc, args, { cwd: workDir, encoding: 'utf8', timeout: 60_000 });
      expect(built.status, `${cc} ${args.join(' ')}\n${built.stderr}`).toBe(0);
      const run = spawnSync(exe, [], { encoding: 'utf8', timeout: 60_000, env: { ...process.env, OMP_NUM_THREADS: '2' } });
      expect(run.status, run.stderr).toBe(0);
      if (printed[file]) expect(run.stdout).toMatch(printed[file]);
    });
  }
});

// ---- step counters -------------------------------------------------------------------------

describe('step counters of loops without a counted header', () => {
  it('while (err > tol && iter < ITER_MAX): iter is the step variable, at most ITER_MAX steps', async () => {
    const a = await analyse('jacobi_tol.c');
    expect(a.timeLoops).toHaveLength(1);
    const t = a.timeLoops[0];
    expect(t.timeLoop.loop.variable).toBe('iter');
    // iter = 0 before the loop, iter < ITER_MAX: ITER_MAX - 0 = 2000 passes at most (C11 §6.8.5.1).
    expect(t.steps.value).toBe(2000);
    expect(t.timeLoop.loop.tripCountIsBound).toBe(true);
    expect(t.timeLoop.loop.counter?.otherExits).toEqual(['the test `err > tol`']);
  });

  it('the update inside `if (iter % 100 == 0)` counts every 100 steps: 4096 B / 100 = 40.96 B per step', async () => {
    const a = await analyse('jacobi_tol.c');
    const update = a.timeLoops[0].ledger!.transfers.find((t) => t.array === 'a')!;
    // a[NX:NX] is one row: NX = 512 doubles × 8 B = 4096 B (hand count).
    expect(update.bytes.value).toBe(4096);
    expect(update.everySteps).toBe(100);
    expect(perStepOf(a, 'a', 'toHost')).toBeCloseTo(40.96, 10);
  });

  it('the report says stepsAtMost and the text says "at most"', async () => {
    const a = await analyse('jacobi_tol.c');
    const r = fileReport(a) as { timeLoops: Record<string, unknown>[] };
    expect(r.timeLoops[0]).toMatchObject({ variable: 'iter', stepsAtMost: true, steps: { value: 2000, expr: 'ITER_MAX' } });
    const text = formatFile(a);
    expect(text).toContain('time loop at line 30 (iter, at most 2,000 (ITER_MAX) steps)');
    expect(text).toContain('the test `err > tol` may end the loop earlier');
  });

  it('while (1) { …; if (step >= NSTEPS) break; step++; }: NSTEPS + 1 = 501 passes, exact', async () => {
    const a = await analyse('break_counter.c');
    const loop = a.timeLoops[0].timeLoop.loop;
    expect(loop.variable).toBe('step');
    // The break test sees step = 0 … NSTEPS: 501 passes (the program's total of 501 confirms it).
    expect(a.timeLoops[0].steps).toMatchObject({ value: 501, expr: 'NSTEPS + 1' });
    expect(loop.tripCountIsBound).toBeUndefined();
    expect(loop.counter?.boundFrom).toBe('break');
  });

  it('Fortran do while (it < itmax) with mod(it, 50) == 0: 400 steps, 160,000 B / 50 = 3200 B per step', async () => {
    const a = await analyse('relax_while.f90');
    expect(a.timeLoops[0].timeLoop.loop.variable).toBe('it');
    expect(a.timeLoops[0].steps.value).toBe(400);
    // p is n = 20000 doubles = 160,000 B; the guard runs the update every 50 steps (not every step).
    expect(perStepOf(a, 'p', 'toHost')).toBe(3200);
  });

  it('Fortran bare do with step = step + 1 first and `if (step >= nsteps) exit` last: nsteps = 300 steps', async () => {
    const a = await analyse('relax_exit.f90');
    expect(a.timeLoops[0].timeLoop.loop.variable).toBe('step');
    expect(a.timeLoops[0].steps.value).toBe(300);
    // p(n/2-1:n/2+1) = 3 doubles = 24 B every 25 steps: 0.96 B per step.
    expect(perStepOf(a, 'p', 'toHost')).toBeCloseTo(0.96, 10);
  });

  const counts = async (src: string): Promise<LoopStmt> => {
    const a = await analyzeText(src, 'counter.c');
    let loop: LoopStmt | undefined;
    walkStatements(a.model.procedures[0].body, (s) => {
      if (s.kind === 'loop') loop ??= s;
    });
    return loop!;
  };

  it('do { … } while (k < n) with k = 2 before it: n - 2 passes (the test after the body sees k = 3 … n)', async () => {
    const loop = await counts('void f(double *a, int n) { int k = 2; do { a[k] = 0.0; k += 1; } while (k < n); }');
    expect(loop.variable).toBe('k');
    expect(S.toString(loop.tripCount!)).toBe('n - 2');
  });

  it('for (;;) with the exit test first acts as the header: n passes', async () => {
    const loop = await counts('void f(double *a, int n) { int s = 0; for (;;) { if (s == n) break; a[s] = 1.0; s = s + 1; } }');
    expect(loop.variable).toBe('s');
    // The test sees s = 0 … n; the pass that sees n does nothing: n passes of work (hand count).
    expect(S.toString(loop.tripCount!)).toBe('n');
  });

  it('for (it = 0; err > tol && it < n; it++) reads the conjunct as an upper bound', async () => {
    const loop = await counts('void f(double *a, int n, double tol) { double err = 1.0; for (int it = 0; err > tol && it < n; it++) { err = a[it]; } }');
    expect(loop.variable).toBe('it');
    expect(S.toString(loop.tripCount!)).toBe('n');
    expect(loop.tripCountIsBound).toBe(true);
  });

  it('for (s = 1; s <= n;) with s++ in the body starts from the header, not from an earlier assignment', async () => {
    const loop = await counts('void f(double *a, int n) { int s = 7; for (s = 1; s <= n;) { a[s] = 0.0; s++; } }');
    expect(loop.variable).toBe('s');
    // s = 1 … n: n - 1 + 1 = n passes (hand count).
    expect(S.toString(loop.tripCount!)).toBe('n');
  });

  it('a counter a `continue` may skip, or one written twice, is no step counter', async () => {
    const skipped = await counts('void f(double *a, int n) { int k = 0; while (k < n) { if (a[k] < 0.0) continue; k++; } }');
    expect(skipped.variable).toBeUndefined();
    const twice = await counts('void f(double *a, int n) { int k = 0; while (k < n) { k++; if (a[k] < 0.0) k = 0; } }');
    expect(twice.variable).toBeUndefined();
  });

  it('a counter passed by address may change in the callee: no step counter', async () => {
    const loop = await counts('void g(int *); void f(int n) { int k = 0; while (k < n) { g(&k); k++; } }');
    expect(loop.variable).toBeUndefined();
  });
});

// ---- names of counts no header gives --------------------------------------------------------

describe('symbols for counts that stay unknown', () => {
  const src = (pad: string): string => `#define N 1000
${pad}int main(void) {
  double *u = 0, *v = 0;
  double err = 1.0, tol = 1e-6;
  int iter = 0;
#pragma acc data copy(u[0:N]) create(v[0:N])
  while (err > tol) {
#pragma acc parallel loop present(u, v)
    for (int i = 1; i < N - 1; i++) v[i] = 0.5 * (u[i - 1] + u[i + 1]);
#pragma acc parallel loop present(u, v)
    for (int i = 1; i < N - 1; i++) u[i] = v[i];
#pragma acc update self(u[0:N])
    err = u[1];
    iter++;
  }
  return iter;
}
`;

  it('a while loop with a counter but no bound is named after the counter (steps_iter), also after lines are added above', async () => {
    for (const pad of ['', '\n\n/* three lines */\n']) {
      const a = await analyzeText(src(pad), 'steps.c');
      expect(a.timeLoops[0].timeLoop.loop.variable).toBe('iter');
      expect(a.timeLoops[0].steps).toMatchObject({ value: null, expr: 'steps_iter', unbound: ['steps_iter'] });
      const f = a.findings.find((x) => x.code === 'unknown-extent')!;
      expect(f.message).toContain('--bind steps_iter=<count>');
    }
  });

  it('binding steps_iter gives the steps and the per-step bytes over them', async () => {
    const a = await analyzeText(src(''), 'steps.c', { steps_iter: 300 });
    expect(a.timeLoops[0].steps.value).toBe(300);
    // update self(u[0:N]) every step: N = 1000 doubles = 8000 B per step (hand count).
    expect(perStepOf(a, 'u', 'toHost')).toBe(8000);
  });

  it('a binding written for the old line-based name (trips_L7) still binds the loop', async () => {
    const a = await analyzeText(src(''), 'steps.c', { trips_L7: 250 });
    expect(a.timeLoops[0].steps.value).toBe(250);
  });

  it('a for loop whose bound is not affine is named after its variable (trips_i)', async () => {
    const a = await analyzeText('void f(double *a, int n) {\n  for (int i = 0; i * i < n; i++) a[i] = 0.0;\n}\n', 'sqrt.c');
    expect(a.nests[0].iterations).toMatchObject({ value: null, expr: 'trips_i' });
  });

  it('a loop without a counter is named after its procedure and rank (trips_main_1)', async () => {
    const a = await analyzeText(src('').replace('    iter++;\n', ''), 'nocounter.c');
    expect(a.timeLoops[0].timeLoop.loop.variable).toBeUndefined();
    expect(a.timeLoops[0].steps.expr).toBe('trips_main_1');
  });
});

// ---- time loops by dependence ---------------------------------------------------------------

describe('time loops found by dependence', () => {
  it('serial heat solver: the pointer swap makes the step loop the time loop; the sweep is a nest costed per step', async () => {
    const a = await analyse('serial_heat.c');
    expect(a.directiveFamilies).toEqual([]);
    expect(a.timeLoops.map((t) => t.timeLoop.loop.keywordRange.start.line + 1)).toEqual([24]);
    expect(a.timeLoops[0].timeLoop.reason).toContain('swaps `u` and `un`');
    const sweep = a.nests.find((n) => n.nest.root.keywordRange.start.line + 1 === 25)!;
    expect(sweep.nest.timeLoop).toBe(a.timeLoops[0].timeLoop.loop);
    // Per step, not folded into the time loop: (NY - 2)*(NX - 2) = 298*398 = 118,604 (hand count).
    expect(sweep.iterations.value).toBe(118604);
    expect(sweep.nest.variables).toEqual(['j', 'i']);
  });

  it('a tile loop around kernels inside the time loop is not the time loop; its kernels launch 16 times per step', async () => {
    const a = await analyse('tiles.c');
    expect(a.timeLoops.map((t) => t.timeLoop.loop.variable)).toEqual(['t']);
    expect(a.timeLoops[0].timeLoop.reason).toContain('`u`');
    expect(a.notTimeLoops.map((r) => [r.loop.keywordRange.start.line + 1, r.loop.variable])).toEqual([[25, 'b'], [30, 'b']]);
    expect(a.notTimeLoops[0].reason).toContain('`b` indexes');
    // The offloaded loops are the nests (TILE - 2 = 4094 iterations per launch), each launched
    // NTILE = 16 times per step by the host loop around it (hand count).
    const work = stepWork(a.timeLoops[0].ledger!, a.nests)!;
    expect(work.kernels.map((k) => [k.perStep, k.work.map((w) => w.iterations)])).toEqual([[16, [4094]], [16, [4094]]]);
  });

  it('an initialisation loop over fields picked by its variable is not a time loop', async () => {
    const a = await analyse('init_fields.c');
    expect(a.timeLoops.map((t) => t.timeLoop.loop.keywordRange.start.line + 1)).toEqual([31]);
    expect(a.notTimeLoops).toHaveLength(1);
    expect(a.notTimeLoops[0].loop.variable).toBe('f');
    expect(a.notTimeLoops[0].reason).toContain('picked by `f`');
  });

  it('the time loop of the Jacobi solver is found by the array it carries (a read before it is written)', async () => {
    const a = await analyse('jacobi_tol.c');
    expect(a.timeLoops[0].timeLoop.reason).toMatch(/reads `a` \(line 35\) before it writes it \(line 41\)/);
  });

  it('a loop over ensemble members, each stepped in time, is not the time loop: the step loop inside it is', async () => {
    const src = `#define N 1000
#define NM 4
#define NT 50
static void step(double *u, double *un) {
#pragma acc parallel loop copyin(u[0:N]) copyout(un[0:N])
  for (int i = 1; i < N - 1; i++) un[i] = 0.5 * (u[i - 1] + u[i + 1]);
}
void run(double *members[NM], double *scratch) {
  for (int m = 0; m < NM; m++) {
    double *u = members[m];
    double *un = scratch;
    for (int t = 0; t < NT; t++) {
      step(u, un);
      double *tmp = u; u = un; un = tmp;
    }
  }
}
`;
    const a = await analyzeText(src, 'ensemble.c');
    expect(a.timeLoops.map((t) => t.timeLoop.loop.variable)).toEqual(['t']);
    expect(a.timeLoops[0].timeLoop.reason).toContain('swaps `u` and `un`');
    expect(a.notTimeLoops.map((r) => r.loop.variable)).toEqual(['m']);
    expect(a.notTimeLoops[0].reason).toContain('picked by `m`');
    // No nest is rooted at the member loop: the kernel in step is the only nest.
    expect(a.nests.map((n) => n.nest.procedure.name)).toEqual(['step']);
  });

  it('a repetition loop writing without reading back is an initialisation loop; a serial loop over one nest that carries nothing is no time loop', async () => {
    const init = await analyzeText('#define N 64\nvoid f(double *a, double *b) {\n  for (int r = 0; r < 3; r++) {\n    for (int i = 0; i < N; i++) a[i] = 0.0;\n    for (int i = 0; i < N; i++) b[i] = 1.0;\n  }\n}\n', 'init.c');
    expect(init.timeLoops).toEqual([]);
    expect(init.notTimeLoops[0].reason).toContain('initialisation');
    const spatial = await analyzeText('#define N 64\nvoid f(double *a, double *b) {\n  for (int j = 0; j < N; j++)\n    for (int i = 0; i < N; i++) a[j * N + i] = b[i];\n}\n', 'spatial.c');
    expect(spatial.timeLoops).toEqual([]);
    expect(spatial.nests[0].nest.variables).toEqual(['j', 'i']);
  });
});

// ---- the user's mark --------------------------------------------------------------------------

describe('marking the time loop', () => {
  it('history.c is not taken as a time loop by itself (its variable indexes every access)', async () => {
    const a = await analyse('history.c');
    expect(a.timeLoops).toEqual([]);
    expect(a.notTimeLoops[0].reason).toContain('`t` indexes');
  });

  it('the time-loop-variables setting names it: 64 steps, nothing moved per step', async () => {
    const a = await analyse('history.c', { timeLoopVariables: ['t'] } as Record<string, unknown>);
    expect(a.timeLoops).toHaveLength(1);
    expect(a.timeLoops[0].timeLoop.marked).toBe('setting');
    expect(a.timeLoops[0].steps.value).toBe(64);
  });

  it('the Fortran annotation comment marks the loop on the next line', async () => {
    const a = await analyse('history_marked.f90');
    expect(a.timeLoops[0].timeLoop.marked).toBe('annotation');
    expect(a.timeLoops[0].timeLoop.loop.keywordRange.start.line + 1).toBe(15);
  });

  it('the annotation may stand before the loop\'s directives, or at the end of its line', () => {
    const c = ['int x;', '// offload-ledger: time-loop', '#pragma acc data \\', '  copy(u[0:N])', '', 'for (t = 0; t < n; t++) {', 'while (go) { /* offload-ledger: time-loop */'].join('\n');
    expect([...markedLoopLines(c, 'c')]).toEqual([5, 6]);
    const f = ['  ! offload-ledger: time-loop', '  !$acc data copy(u)', '  do t = 1, n'].join('\n');
    expect([...markedLoopLines(f, 'fortran')]).toEqual([2]);
  });

  it('the CLI flag --time-loop t marks it in the JSON report; a bad name is a usage error', () => {
    const r = runCli(['check', '--format', 'json', '--time-loop', 't', at('history.c')]);
    expect(r.stderr).toBe('');
    const file = JSON.parse(r.stdout).files[0];
    expect(file.timeLoops[0]).toMatchObject({ line: 21, variable: 't', marked: 'setting', steps: { value: 64 } });
    const bad = runCli(['check', '--time-loop', '1t', at('history.c')]);
    expect(bad.status).toBe(2);
    expect(bad.stderr).toContain('--time-loop expects a variable name');
  });

  it('the text names loops around kernels that are not time loops, with the reason', () => {
    const r = runCli(['check', at('tiles.c')]);
    expect(r.stdout).toContain('not a time loop: line 25 (b in main): its variable `b` indexes');
    expect(r.stdout).toContain('taken as the time loop: each pass reads `u`');
  });
});

// ---- the hover ----------------------------------------------------------------------------------

describe('hover cards say why', () => {
  const view = async (f: string) => {
    const a = await analyse(f);
    return buildView({ uri: `file://${at(f)}`, version: 1, text: read(f), analysis: a, userBindings: new Map(), analysisMilliseconds: 0 }, {
      profileName: 'pcie4-hbm2e', baseline: 'node', severity: {}, codeLens: true, inlayHints: false, docsHref: 'file:///docs',
    });
  };
  const md = (v: Awaited<ReturnType<typeof view>>, line: number, character: number): string =>
    (hoverAt(v, { line: line - 1, character })?.contents as { value: string } | undefined)?.value ?? '';

  it('the time-loop card gives the steps as a bound, the counter and the reason', async () => {
    const card = md(await view('jacobi_tol.c'), 30, 3);
    expect(card).toContain('**Time loop at line 30** · `iter`');
    expect(card).toContain('at most');
    expect(card).toContain('_Taken as the time loop:_ each pass reads `a`');
    expect(card).toContain('Steps counted by `iter` (incremented at line 46), bounded by the test `iter < ITER_MAX`');
    expect(card).toContain('The count is an upper bound: the test `err > tol` may end the loop earlier');
  });

  it('a tile loop around kernels explains why it is not the time loop', async () => {
    const card = md(await view('tiles.c'), 25, 5);
    expect(card).toContain('not a time loop');
    expect(card).toContain('`b` indexes most arrays');
    expect(card).toContain('// offload-ledger: time-loop');
  });
});
