/**
 * Port plans and `port` (issue: before the port). Checked against things outside the project:
 * - the hand-worked pre-port example of docs/cost-model.md ("Before the port"), from the profile
 *   figures in server/src/core/machine/profiles.ts and the roofline convention;
 * - gcc -fopenacc / -fopenmp and gfortran: every port of the serial examples compiles and prints
 *   exactly what the serial program prints;
 * - LLVM's OpenMP offload runtime with separate memories (libomptarget 14, see tests/verify.test.ts):
 *   the OpenMP port of each serial C example keeps its results, and the bytes every construct moves
 *   equal the ledger of the ported program, which is the plan's (the plan is that analysis);
 * - the race analysis decides what is ported: a nest with a dependence stays on the host, and
 *   each loop that is ported gives the same results forwards and backwards (tests/dependences-13).
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { basename, join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import type { VerifyArgs } from '../server/src/cli/args';
import { findToolchain, formatVerify, verify } from '../server/src/cli/verify';
import { applyTextEdits } from '../server/src/core/data/edits';
import { analyzeSource, type FileAnalysis } from '../server/src/core/analyze';
import { languageOfPath } from '../server/src/core/language';
import { readHeader } from '../server/src/host/files';
import { buildRefactors } from '../server/src/lsp/view/refactors';
import { buildView } from '../server/src/lsp/view/build';
import { codeActionsFor } from '../server/src/lsp/features/codeActions';
import { ROOT, analyzeText, grammarsForTests, runCli } from './helpers';

const tmp = mkdtempSync(join(tmpdir(), 'ol-port-'));
afterAll(() => rmSync(tmp, { recursive: true, force: true }));

const have = (cmd: string, args: string[] = ['--version']): boolean => spawnSync(cmd, args).status === 0;
const gcc = have('gcc');
const gfortran = have('gfortran');
if (!gcc) console.log('skipped: gcc not found, so the ports cannot be compiled');

async function analyse(file: string, text = readFileSync(file, 'utf8'), family?: 'openacc' | 'openmp', defines?: Map<string, string>): Promise<FileAnalysis> {
  const g = await grammarsForTests();
  return analyzeSource({ path: file, text, language: languageOfPath(file) ?? 'c' }, { ...g, readInclude: readHeader }, {
    ...(family ? { portFamily: family } : {}), ...(defines ? { defines } : {}),
  });
}

describe('the worked pre-port example (docs/cost-model.md, "Before the port")', () => {
  it('gives the hand-worked figures for serial 2-D heat, 2048², 400 steps', async () => {
    const a = await analyse(join(ROOT, 'tests/fixtures/port/heat_serial_2048.c'));
    expect(a.baseline).toBe('core');
    const sweep = a.nests.find((n) => n.nest.root.keywordRange.start.line + 1 === 14)!;
    expect(sweep.iterations.value).toBe(4_186_116);
    expect(sweep.cost.flopsPerIteration).toBe(7);
    expect(sweep.cost.bytes).toMatchObject({ device: 16, host: 24 });
    const t = a.timeLoops[0];
    // The time loop is its own loop, not folded into the sweep's nest.
    expect(a.nests.every((n) => !n.nest.variables.includes('t'))).toBe(true);
    const p = t.plans!;
    expect(p.hostStepSeconds! * 1e3).toBeCloseTo(7.176, 3);
    expect(p.offloaded).toEqual([{ line: 14, procedure: 'main', collapse: 2, clauses: ['copy(un[0:NX*NY])', 'copyin(u[0:NX*NY])'] }]);
    expect(p.naive.bytesPerStep).toEqual({ toDevice: 67_108_864, toHost: 33_554_432 });
    expect(p.naive.transfersPerStep).toBe(3);
    expect(p.naive.stepSeconds! * 1e3).toBeCloseTo(3.833, 3);
    expect(p.naive.speedup!.low).toBeCloseTo(1.54, 2);
    expect(p.naive.speedup!.expected).toBeCloseTo(1.87, 2);
    expect(p.naive.speedup!.high).toBeCloseTo(2.75, 2);
    expect(p.naive.bound).toBe('transfer');
    expect(p.resident.bytesPerStep).toEqual({ toDevice: 0, toHost: 0 });
    expect(p.resident.stepSeconds! * 1e6).toBeCloseTo(44.4, 1);
    expect(p.resident.speedup!.low).toBeCloseTo(108.3, 0);
    expect(p.resident.speedup!.expected).toBeCloseTo(161.6, 0);
    expect(p.resident.speedup!.high).toBeCloseTo(214.1, 0);
    expect(p.resident.bound).toBe('memory');
    expect(p.resident.residentBytes).toBe(67_108_864);
    expect(p.resident.fits).toBe(true);
    expect(p.onHost).toEqual([]);
  });

  it('the pre-port estimate of plan 2 equals the estimate of the ported program (two routes, one model)', async () => {
    const file = join(ROOT, 'tests/fixtures/port/heat_serial_2048.c');
    const a = await analyse(file);
    // The ported file has directives, so by itself it would be compared with the whole node: the
    // same baseline as the plan's (one core) makes the two routes comparable.
    const g = await grammarsForTests();
    const ported = analyzeSource({ path: file, text: a.port!.text, language: 'c' }, { ...g, readInclude: readHeader }, { baseline: 'core' });
    const p = a.timeLoops[0].plans!;
    const e = ported.timeLoops[0].estimate!;
    expect(e.deviceSeconds).toBeCloseTo(p.resident.stepSeconds!, 12);
    expect(e.speedup).toEqual(p.resident.speedup);
    expect(ported.timeLoops[0].ledger!.perStep.toDevice.value).toBe(0);
    expect(ported.findings.filter((f) => f.severity !== 'info')).toEqual([]);
  });

  it('says the baseline: one core for serial code, the node once the code runs in parallel', async () => {
    const serial = await analyse(join(ROOT, 'examples/serial/heat2d_serial.c'));
    const host = await analyse(join(ROOT, 'examples/serial/heat2d_omp_host.c'));
    expect(serial.baseline).toBe('core');
    expect(host.baseline).toBe('node');
    const text = runCli(['check', join(ROOT, 'tests/fixtures/port/heat_serial_2048.c')]).stdout;
    expect(text).toMatch(/port plans \(OpenACC, before any directive is written; one-core baseline\)/);
    expect(text).toMatch(/1 naive: .*speedup 1\.54–2\.75×/);
    expect(text).toMatch(/2 resident: .*0 B to device, 0 B to host per step/);
  });
});

/** Small sizes from a serial example's header: C -D flags, or the Fortran sed substitution. */
function small(text: string): { defines: string[] } | { from: string; to: string } {
  const line = /Small:(.*)/.exec(text)?.[1] ?? '';
  const sed = /s\/([^/]+)\/([^/]+)\//.exec(line);
  if (sed) return { from: sed[1], to: sed[2] };
  return { defines: [...line.matchAll(/-D\s*(\w+=\S+)/g)].map((m) => `-D${m[1]}`) };
}

let serial = 0;
function buildRun(src: string, file: string, flags: string[]): string {
  const fortran = /\.f90$/.test(file);
  const name = `p${serial++}`;
  const sizes = small(src);
  const path = join(tmp, `${name}${fortran ? '.f90' : file.endsWith('.cpp') ? '.cpp' : '.c'}`);
  writeFileSync(path, 'from' in sizes ? src.split(sizes.from).join(sizes.to) : src);
  const exe = join(tmp, name);
  const cc = fortran ? 'gfortran' : 'gcc';
  const r = spawnSync(cc, ['-O1', ...(fortran ? [`-J${tmp}`] : ['-std=c11']), ...flags, ...('defines' in sizes ? sizes.defines : []), path, '-o', exe, '-lm'], { encoding: 'utf8' });
  expect(r.status, `${cc} ${flags.join(' ')} on ${basename(file)}:\n${r.stderr}`).toBe(0);
  const run = spawnSync(exe, [], { encoding: 'utf8', timeout: 120_000, env: { ...process.env, OMP_NUM_THREADS: '1' } });
  expect(run.status, run.stderr).toBe(0);
  return run.stdout;
}

// The serial demo programs and stencils of examples/serial, and a 3-D 7-point Jacobi of our own.
const SERIAL = [
  ...['heat2d_serial.c', 'heat2d_omp_host.c', 'hall_serial.c', 'wave2d_serial.c', 'advect1d_serial.c', 'estuary_serial.f90'].map((n) => `examples/serial/${n}`),
  'tests/fixtures/port/jacobi3d.c',
];

describe.skipIf(!gcc)('the port of each serial example compiles and prints what the serial program prints', () => {
  for (const name of SERIAL) {
    for (const family of ['openacc', 'openmp'] as const) {
      const file = join(ROOT, name);
      it.skipIf(name.endsWith('.f90') && !gfortran)(`${name}, ${family}`, async () => {
        const text = readFileSync(file, 'utf8');
        const a = await analyse(file, text, family);
        expect(a.port, 'a port is written').toBeDefined();
        const p = a.timeLoops.find((t) => t.plans)!.plans!;
        expect(p.family).toBe(family);
        expect(p.offloaded.length).toBeGreaterThan(0);
        const hostFlag = /omp parallel|do concurrent/i.test(text) ? ['-fopenmp'] : [];
        const expected = buildRun(text, name, hostFlag);
        expect(buildRun(a.port!.text, name, [family === 'openacc' ? '-fopenacc' : '-fopenmp'])).toBe(expected);
        // The ported program re-analyses to no per-step copies but the updates host code needs.
        const again = await analyzeText(a.port!.text, file);
        for (const t of again.timeLoops) {
          expect(t.ledger!.transfers.filter((x) => x.cause !== 'update' && !x.scalar)).toEqual([]);
        }
        expect(again.findings.filter((f) => f.severity === 'error')).toEqual([]);
      });
    }
  }
});

const tc = findToolchain(undefined);
const offload = !('error' in tc) && spawnSync('clang' in tc ? tc.clang : 'clang', ['--version']).status === 0 && have('/bin/sh', ['-c', 'ls /usr/lib/llvm-*/bin/clang-offload-wrapper']);

describe.skipIf(!offload)('the OpenMP port measured with separate memories (libomptarget 14)', () => {
  for (const name of SERIAL.filter((n) => !n.endsWith('.f90'))) {
    it(name, async () => {
      const file = join(ROOT, name);
      const text = readFileSync(file, 'utf8');
      const a = await analyse(file, text, 'openmp');
      const ported = join(tmp, basename(name));
      writeFileSync(ported, a.port!.text);
      const sizes = small(text) as { defines: string[] };
      const defines = new Map(sizes.defines.map((d) => d.slice(2).split('=') as [string, string]));
      const args: VerifyArgs = {
        command: 'verify', paths: [ported], runArgs: [], timeoutSeconds: 120, format: 'text', bindings: new Map(), defines,
        undefines: [], includeDirs: [], timeLoopVariables: [],
      };
      const r = await verify(args, () => undefined);
      const why = formatVerify(r, (p) => p);
      expect(r.sameOutput, why).toBe(true);
      expect(r.comparison.differences, why).toBe(0);
      // Measured bytes per step equal the plan's at the same sizes: the plan is this ledger.
      const atSmall = await analyse(file, text, 'openmp', defines);
      const plan = atSmall.timeLoops.find((t) => t.plans)!.plans!;
      const t = r.comparison.timeLoops[0];
      const periodic = t.periodic.reduce((s, x) => s + x.predictedPerRun / x.everySteps, 0);
      const planned = plan.resident.bytesPerStep.toDevice! + plan.resident.bytesPerStep.toHost!;
      expect(t.predictedEveryStep!.toDevice + t.predictedEveryStep!.toHost + periodic).toBeCloseTo(planned, 6);
      expect(t.measured!.toDevice + t.measured!.toHost).toBeCloseTo(t.predictedEveryStep!.toDevice + t.predictedEveryStep!.toHost, 6);
    });
  }
});

describe('what a port leaves alone', () => {
  const GAUSS_SEIDEL = `#include <stdio.h>
#define N 256
#define STEPS 50
static double u[N][N], f[N][N];
int main(void) {
  for (int j = 0; j < N; j++) for (int i = 0; i < N; i++) { u[j][i] = 0.0; f[j][i] = (i == N / 2 && j == N / 2) ? 1.0 : 0.0; }
  for (int it = 0; it < STEPS; it++) {
    for (int j = 1; j < N - 1; j++)
      for (int i = 1; i < N - 1; i++)
        u[j][i] = 0.25 * (u[j][i - 1] + u[j][i + 1] + u[j - 1][i] + u[j + 1][i] + f[j][i]);
    double s = 0.0;
    for (int j = 0; j < N; j++)
      for (int i = 0; i < N; i++) s += u[j][i];
    if (it % 10 == 0) printf("%d %.10e\\n", it, s);
  }
  return 0;
}
`;

  it('keeps a Gauss–Seidel sweep on the host, says why, and still ports the reduction beside it', async () => {
    const a = await analyzeText(GAUSS_SEIDEL, join(tmp, 'gs.c'));
    const p = a.timeLoops[0].plans!;
    const gs = p.onHost.find((h) => h.line === 8);
    expect(gs?.reason).toMatch(/dependence/);
    expect(p.offloaded.map((o) => o.line)).toEqual([12]);
    expect(p.offloaded[0].clauses).toContain('reduction(+:s)');
    if (gcc) {
      const port = join(tmp, 'gs_port.c');
      writeFileSync(port, a.port!.text);
      const base = join(tmp, 'gs.c');
      writeFileSync(base, GAUSS_SEIDEL);
      const run = (src: string, flag: string[]): string => {
        const exe = `${src}.exe`;
        expect(spawnSync('gcc', ['-O1', ...flag, src, '-o', exe]).status).toBe(0);
        return spawnSync(exe, [], { encoding: 'utf8' }).stdout;
      };
      expect(run(port, ['-fopenacc'])).toBe(run(base, []));
    }
  });

  it('keeps `do concurrent` on the host: gcc 12 takes no loop directive on it (examples/serial/jacobi3d_docon.f90)', async () => {
    const a = await analyse(join(ROOT, 'examples/serial/jacobi3d_docon.f90'));
    const p = a.timeLoops[0].plans!;
    expect(p.offloaded).toEqual([]);
    expect(p.onHost.length).toBe(2);
    for (const h of p.onHost) expect(h.reason).toMatch(/do concurrent/);
    expect(a.port!.text).toBe(readFileSync(join(ROOT, 'examples/serial/jacobi3d_docon.f90'), 'utf8'));
  });

  it('keeps loops with I/O or calls it cannot see on the host, with the reason', async () => {
    const text = `#include <stdio.h>
#define N 1000
double g(double x);
static double u[N], v[N];
int main(void) {
  for (int t = 0; t < 10; t++) {
    for (int i = 0; i < N; i++) v[i] = g(u[i]);
    for (int i = 0; i < N; i++) printf("%f\\n", v[i]);
    for (int i = 0; i < N; i++) u[i] = v[i];
  }
  return 0;
}
`;
    const a = await analyzeText(text, join(tmp, 'io.c'));
    const p = a.timeLoops[0].plans!;
    expect(p.onHost.map((h) => [h.line, h.reason.split(',')[0]])).toEqual([
      [7, 'it calls `g`'],
      [8, 'it calls `printf` (I/O or memory management)'],
    ]);
    expect(p.offloaded.map((o) => o.line)).toEqual([9]);
  });
});

describe('offload-ledger port', () => {
  it('prints the resident port as a diff, --write applies it, and the code action gives the same text', async () => {
    const file = join(tmp, 'heat.c');
    const text = readFileSync(join(ROOT, 'tests/fixtures/port/heat_serial_2048.c'), 'utf8');
    writeFileSync(file, text);
    const diff = runCli(['port', file]);
    expect(diff.status, diff.stderr).toBe(0);
    // Both come back after the loop: the swap moves the two storages between the names (which one
    // `u` holds at the end depends on the step count).
    expect(diff.stdout).toMatch(/^\+\s*#pragma acc data copy\(u\[0:NX\*NY\], un\[0:NX\*NY\]\)$/m);
    expect(diff.stdout).toMatch(/^\+\s*#pragma acc parallel loop collapse\(2\) present\(un\[0:NX\*NY\], u\[0:NX\*NY\]\)$/m);
    expect(diff.stderr).toMatch(/step 7\.18 ms on the host → 44\.4 µs ported; speedup 108\.26–214\.09×/);
    expect(readFileSync(file, 'utf8')).toBe(text);
    const a = await analyzeText(text, file);
    const action = buildRefactors(a, text).find((r) => /^Port the time loops/.test(r.title))!;
    const edited = applyTextEdits(text, action.edits.map((e) => ({ range: { start: { line: e.range.start.line, col: e.range.start.character }, end: { line: e.range.end.line, col: e.range.end.character } }, newText: e.newText })));
    expect(edited).toBe(a.port!.text);
    const w = runCli(['port', `${file}:13`, '--write']);
    expect(w.status, w.stderr).toBe(0);
    expect(readFileSync(file, 'utf8')).toBe(a.port!.text);
  });

  it('the editor offers the port at the time loop (a rewrite, not a fix) and the hover shows the plans', async () => {
    const file = join(ROOT, 'tests/fixtures/port/heat_serial_2048.c');
    const text = readFileSync(file, 'utf8');
    const a = await analyzeText(text, file);
    const view = buildView({ uri: 'file:///heat.c', version: 1, text, analysis: a, userBindings: new Map(), analysisMilliseconds: 0 },
      { profileName: 'pcie4-hbm2e', baseline: 'auto', severity: {}, codeLens: true, inlayHints: true, docsHref: 'file:///docs' });
    const at = { start: { line: 13, character: 4 }, end: { line: 13, character: 4 } };
    const actions = codeActionsFor(view, { textDocument: { uri: view.uri }, range: at, context: { diagnostics: [] } });
    expect(actions.map((x) => [x.kind, x.title.split(':')[0]])).toEqual([['refactor.rewrite', 'Port the time loops that run on the host to OpenACC']]);
    // A request for the fixes of a diagnostic gets the fixes only.
    expect(codeActionsFor(view, { textDocument: { uri: view.uri }, range: at, context: { diagnostics: [{ range: at, message: 'x' }] } })).toEqual([]);
    expect(view.cards.join('\n')).toMatch(/\*\*Port plans\*\* \(OpenACC, before any directive is written; one-core baseline/);
  });

  it('refuses a file with syntax errors, naming the first', () => {
    const file = join(tmp, 'broken.c');
    writeFileSync(file, 'int main(void) {\n  double u[10];\n  for (int t = 0; t < 5; t++ {\n    u[0] = t;\n}\n');
    const r = runCli(['port', file]);
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(/port refuses a file with syntax errors; the first: .*broken\.c:3:/);
  });

  it('says why when there is nothing to port', () => {
    const r = runCli(['port', join(ROOT, 'examples/heat2d/heat2d_acc.c')]);
    expect(r.status).toBe(2);
    expect(r.stderr).toMatch(/nothing to port: its time loops already offload/);
  });
});
