/**
 * One caution wherever a figure is shown (issue: say what you know): the JSON report names the
 * models and the caution, the hover says the baseline the analysis used and that measurement
 * decides, and the planning report marks a speedup that rests on a program with errors.
 */
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { buildView } from '../server/src/lsp/view/build';
import { ROOT, analyzeFile, analyzeText, runCli, schemaValidator } from './helpers';

describe('cautions', () => {
  it('the JSON report says what the estimates rest on, and that measurement decides', () => {
    const r = runCli(['check', '--format', 'json', join(ROOT, 'examples/heat2d/heat2d_acc.c')]);
    const j = JSON.parse(r.stdout);
    expect(schemaValidator()(j).ok).toBe(true);
    expect(j.estimates.model).toMatch(/roofline per loop nest/);
    expect(j.estimates.profile).toBe('pcie4-hbm2e');
    expect(j.estimates.caution).toMatch(/Measure on the target machine to decide/);
  });

  it('the hover gives the baseline the analysis used (one core for serial code) and the caution', async () => {
    const file = join(ROOT, 'examples/serial/heat2d_serial.c');
    const a = await analyzeFile(file);
    const view = buildView({ uri: 'file:///h.c', version: 1, text: '', analysis: a, userBindings: new Map(), analysisMilliseconds: 0 },
      { profileName: 'pcie4-hbm2e', baseline: 'auto', severity: {}, codeLens: false, inlayHints: false, docsHref: 'file:///docs' });
    const cards = view.cards.join('\n');
    expect(cards).toMatch(/baseline one host core \(serial code\)/);
    expect(cards).toMatch(/measure on the target machine to decide/);
    expect(cards).not.toMatch(/the whole host node/);
  });

  it('the suggested region is always shown with the updates host code needs (text and planning report)', () => {
    const file = join(ROOT, 'examples/hall/hall_naive_acc.c');
    const text = runCli(['check', file]).stdout;
    expect(text).toMatch(/plus 4 updates for host code in the loop\n {6}with, before line 132: #pragma acc update self\(p\[NX\*NY\*SZ \+ NX\*SY \+ SX:1\]\)/);
    const html = runCli(['check', '--format', 'html', file]).stdout;
    expect(html).toMatch(/With these updates for host code in the loop:<\/p><ul><li>before line 132: <code>#pragma acc update self/);
  });

  it('one missing data region is one finding: the arrays listed, each construct as related information (JSON, text, SARIF)', () => {
    // heat2d_acc.c: u and unew (8 MiB each) copied both ways by the constructs at lines 47 and 63
    // every step and at line 56 every 100 steps: 8 MiB * 2 arrays * 2 ways * (2 + 1/100) = 64.3 MiB per step.
    const file = join(ROOT, 'examples/heat2d/heat2d_acc.c');
    const j = JSON.parse(runCli(['check', '--format', 'json', file]).stdout);
    const region = j.files[0].findings.filter((f: { code: string; severity: string }) => f.code === 'implicit-transfer');
    expect(region).toHaveLength(1);
    expect(region[0].message).toMatch(/No data region keeps `u` and `unew` \(16\.0 MiB together\).*3 constructs.*OpenACC 3\.3 §2\.6\.2.*64\.3 MiB per step/);
    expect(region[0].message).not.toMatch(/OpenMP/);
    expect(region[0].related.map((r: { line: number }) => r.line)).toEqual([47, 56, 63]);
    expect(region[0].related[1].message).toMatch(/^every 100 steps: `unew` to the device and back \(163\.8 KiB per step\)/);
    const text = runCli(['check', file]).stdout;
    expect(text).toMatch(/quick fix available\); each construct is listed below\.\n {6}line 47: every time step: `u` to the device and back/);
    const sarif = JSON.parse(runCli(['check', '--format', 'sarif', file]).stdout);
    const result = sarif.runs[0].results.find((r: { ruleId: string }) => r.ruleId === 'implicit-transfer');
    expect(result.relatedLocations.map((r: { physicalLocation: { region: { startLine: number } } }) => r.physicalLocation.region.startLine)).toEqual([47, 56, 63]);
    // The OpenMP port cites its own standard.
    const omp = JSON.parse(runCli(['check', '--format', 'json', join(ROOT, 'examples/heat2d/heat2d_omp.c')]).stdout);
    const m = omp.files[0].findings.filter((f: { severity: string }) => f.severity === 'warning').map((f: { message: string }) => f.message).join('\n');
    expect(m).not.toMatch(/OpenACC/);
  });

  it('a message asks for the update of the file\'s own model, citing its own standard', async () => {
    const omp = await analyzeFile(join(ROOT, 'tests/fixtures/verify/host_boundary_omp.c'));
    const m = omp.findings.find((f) => f.code === 'stale-on-device')!.message;
    expect(m).toMatch(/`target update to` \(OpenMP 5\.2 §13\.9\)/);
    expect(m).not.toMatch(/OpenACC/);
    const acc = await analyzeFile(join(ROOT, 'examples/hall/hall_stale_acc.c'));
    for (const f of acc.findings.filter((x) => x.code.startsWith('stale-'))) expect(f.message).not.toMatch(/OpenMP/);
  });

  it('race messages write elements as the language does: u(i - 1) in Fortran', async () => {
    const f = await analyzeFile(join(ROOT, 'tests/fixtures/dependences/textbook_acc.f90'));
    const races = f.findings.filter((x) => x.code === 'loop-carried-dependence');
    expect(races.length).toBeGreaterThan(0);
    for (const r of races) expect(r.message).not.toMatch(/\w\[[^\]]*\]/);
    expect(races.some((r) => /`a\(i - 1\)`/.test(r.message))).toBe(true);
  });

  it('one program, one baseline: a serial file of a project whose other files run in parallel is measured against the node', () => {
    const dir = mkdtempSync(join(tmpdir(), 'ol-baseline-'));
    try {
      writeFileSync(join(dir, 'sweep.c'), [
        '#define N 4096',
        'void sweep(double *a, const double *b) {',
        '#pragma omp target teams distribute parallel for map(tofrom: a[0:N]) map(to: b[0:N])',
        '  for (int i = 0; i < N; i++) a[i] += b[i];',
        '}',
      ].join('\n'));
      writeFileSync(join(dir, 'setup.c'), ['#define N 4096', 'void setup(double *a) {', '  for (int i = 0; i < N; i++) a[i] = 0.5 * i;', '}'].join('\n'));
      // A file with its own main is a program of its own, even in the same folder.
      writeFileSync(join(dir, 'alone.c'), ['#define N 4096', 'static double x[N];', 'int main(void) {', '  for (int i = 0; i < N; i++) x[i] = 2.0 * i;', '  return 0;', '}'].join('\n'));
      const text = runCli(['check', dir]).stdout;
      const baselineOf = (file: string): string => /estimates: [^\n]*?(one-core|whole-node) baseline \(([^)]*)\)/.exec(text.slice(text.indexOf(`${file}  (`)))!.slice(1, 3).join(': ');
      expect(baselineOf('setup.c')).toBe('whole-node: a program whose other files already run in parallel');
      expect(baselineOf('sweep.c')).toBe('whole-node: code that already runs in parallel');
      expect(baselineOf('alone.c')).toBe('one-core: serial code');
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });

  it('a missing reduction says what happens: a race on a mapped scalar, a private copy for one in no clause (each model\'s own standard)', async () => {
    const src = [
      '#define N 1000',
      'int main(void) {',
      '  static double a[N]; double s = 0.0, m = 0.0;',
      '  for (int i = 0; i < N; i++) a[i] = i;',
      '#pragma omp target teams distribute parallel for map(to: a[0:N]) map(tofrom: s)',
      '  for (int i = 0; i < N; i++) s += a[i];',
      '#pragma acc parallel loop copyin(a[0:N])',
      '  for (int i = 0; i < N; i++) m = m > a[i] ? m : a[i];',
      '  return (int)(s + m);',
      '}',
    ].join('\n');
    const a = await analyzeText(src, 'reductions.c');
    const [mapped, unnamed] = a.findings.filter((f) => f.code === 'missing-reduction').map((f) => f.message);
    expect(mapped).toMatch(/`s` is in the `map` clause, so every iteration updates the one shared copy at once: a data race/);
    expect(mapped).not.toMatch(/firstprivate|its own copy/);
    expect(unnamed).toMatch(/firstprivate \(OpenACC 3\.3 §2\.6\.2\), so each thread keeps the largest value in its own copy and the host never sees the maximum/);
  });

  it('no finding offers a fix that leaves the text as it is (every example and fixture)', async () => {
    const { readdirSync } = await import('node:fs');
    const walk = (d: string): string[] => readdirSync(d, { withFileTypes: true }).flatMap((e) => (e.isDirectory() ? walk(join(d, e.name)) : /\.(c|cpp|f90|F90)$/.test(e.name) ? [join(d, e.name)] : []));
    const { applyTextEdits } = await import('../server/src/core/data/edits');
    const { readFileSync } = await import('node:fs');
    const noOps: string[] = [];
    for (const f of [...walk(join(ROOT, 'examples')), ...walk(join(ROOT, 'tests/fixtures'))]) {
      const text = readFileSync(f, 'utf8');
      const a = await analyzeText(text, f);
      for (const x of a.findings) for (const fix of x.fixes ?? []) if (applyTextEdits(text, fix.edits) === text) noOps.push(`${f}: ${x.code}: ${fix.title}`);
    }
    expect(noOps).toEqual([]);
  }, 300_000);

  it('a clause that looks like a macro of the build is a warning naming the define, not an error; a misspelt clause stays an error', async () => {
    const src = [
      '#define N 1000',
      'void f(double *a) {',
      '#pragma omp target teams distribute parallel for simd GPU_SCHEDULE map(tofrom: a[0:N])',
      '  for (int i = 0; i < N; i++) a[i] *= 2.0;',
      '#pragma omp target teams distribute parallel for maps(tofrom: a[0:N])',
      '  for (int i = 0; i < N; i++) a[i] *= 2.0;',
      '}',
    ].join('\n');
    const a = await analyzeText(src, 'macro_clause.c');
    const syntax = a.findings.filter((f) => f.code === 'directive-syntax');
    expect(syntax.map((f) => [f.range.start.line + 1, f.severity])).toEqual([[3, 'warning'], [5, 'error']]);
    expect(syntax[0].message).toMatch(/looks like a macro the build defines \(`-DGPU_SCHEDULE=\.\.\.`\): give it with `--define GPU_SCHEDULE=\.\.\.`/);
    // With the define the clause it stands for is read and nothing is reported.
    const b = await analyzeText(src.replace('#define N 1000', '#define N 1000\n#define GPU_SCHEDULE schedule(static, 1)'), 'macro_clause.c');
    expect(b.findings.filter((f) => f.code === 'directive-syntax').map((f) => f.severity)).toEqual(['error']);
  });

  it('an inner loop that declares the outer loop\'s variable again hides it: no dependence is claimed for the hidden loop', async () => {
    // A wavefront over tiles: the gang loop over tile columns `j` picks tiles on one anti-diagonal
    // (independent), and inside each tile new `i`, `j` sweep the elements in order.
    const src = [
      '#include <algorithm>',
      'void sweep(int n, int nb, int nc, double *grid) {',
      '  for (int d = 2; d <= 2 * nb; d++) {',
      '#pragma acc parallel loop gang present(grid[0:n*n])',
      '    for (int j = std::max(2, d - nb + 1); j <= std::min(d, nb + 1); j++) {',
      '      const int ib = nc * (d - j) + 1;',
      '      const int jb = nc * (j - 2) + 1;',
      '#pragma acc loop seq',
      '      for (int i = ib; i < std::min(n, ib + nc); i++)',
      '        for (int j = jb; j < std::min(n, jb + nc); j++)',
      '          grid[i * n + j] = grid[(i - 1) * n + j] + grid[i * n + (j - 1)] - grid[(i - 1) * n + (j - 1)];',
      '    }',
      '  }',
      '}',
    ].join('\n');
    const a = await analyzeText(src, 'wavefront.cpp');
    expect(a.findings.filter((f) => f.severity === 'error').map((f) => f.message)).toEqual([]);
  });

  it('a doacross loop (ordered(2) with depend(sink)) synchronises its dependences: no race is claimed; without ordered it is one', async () => {
    const src = (ordered: boolean): string => [
      '#define N 512',
      'void pipeline(double g[N][N]) {',
      '#pragma omp target map(tofrom: g[0:N][0:N])',
      `#pragma omp parallel for collapse(2)${ordered ? ' ordered(2)' : ''}`,
      '  for (int j = 1; j < N; j++)',
      '    for (int i = 1; i < N; i++) {',
      ...(ordered ? ['#pragma omp ordered depend(sink: j, i - 1) depend(sink: j - 1, i)'] : []),
      '      g[j][i] = g[j][i - 1] + g[j - 1][i];',
      ...(ordered ? ['#pragma omp ordered depend(source)'] : []),
      '    }',
      '}',
    ].join('\n');
    const races = async (ordered: boolean) => (await analyzeText(src(ordered), 'doacross.c')).findings.filter((f) => f.code === 'loop-carried-dependence');
    expect(await races(true)).toEqual([]);
    expect((await races(false)).length).toBeGreaterThan(0);
  });

  it('race messages quote the access as written (the index macro), not its expansion', async () => {
    const src = [
      '#define NX 64',
      '#define NY 64',
      '#define IDX(i, j) ((i) + NX * (j))',
      'void sweep(double *u) {',
      '#pragma acc parallel loop collapse(2) present(u)',
      '  for (int j = 1; j < NY - 1; j++)',
      '    for (int i = 1; i < NX - 1; i++)',
      '      u[IDX(i, j)] = 0.5 * (u[IDX(i - 1, j)] + u[IDX(i + 1, j)]);',
      '}',
    ].join('\n');
    const a = await analyzeText(src, 'inplace.c');
    const races = a.findings.filter((f) => f.code === 'loop-carried-dependence').map((f) => f.message);
    expect(races).toHaveLength(2);
    expect(races[0]).toMatch(/reads `u\[IDX\(i - 1, j\)\]`, which iteration i - 1 writes as `u\[IDX\(i, j\)\]`/);
    expect(races.join('\n')).not.toMatch(/NX \*|\(unknown\)/);
  });

  it('nothing is silently zero: an indirect subscript and an unknown call are listed with what they do, and the nest is marked', () => {
    const dir = mkdtempSync(join(tmpdir(), 'ol-nu-'));
    try {
      const f = join(dir, 'nu.c');
      writeFileSync(f, [
        '#define N 1000', 'double g(double);', 'static double u[N], v[N], w[N];', 'static int idx[N];', 'int main(void) {',
        '  for (int t = 0; t < 10; t++) {', '#pragma acc parallel loop', '    for (int i = 0; i < N; i++) v[i] = u[idx[i]] + g(w[i]);',
        '#pragma acc parallel loop', '    for (int i = 0; i < N; i++) u[i] = v[i];', '  }', '  return 0;', '}', '',
      ].join('\n'));
      const text = runCli(['check', f]).stdout;
      expect(text).toMatch(/^ {2}8\? +main/m);
      expect(text).toMatch(/^ {2}10 +main/m);
      expect(text).toMatch(/not understood \(line 8, .*\): the call `g\(…\)`: .*0 flops/);
      expect(text).toMatch(/not understood \(line 8, .*\): `u\[idx\[i\]\]`: the subscript is not affine in `i`/);
      const j = JSON.parse(runCli(['check', '--format', 'json', f]).stdout);
      expect(schemaValidator()(j).ok).toBe(true);
      expect(j.files[0].notUnderstood.map((x: { kind: string; nestLine: number }) => `${x.kind}@${x.nestLine}`)).toEqual(['call@8', 'subscript@8']);
    } finally {
      rmSync(dir, { recursive: true, force: true });
    }
  });

  it('the planning report marks a speedup that rests on a loop with errors', () => {
    const html = runCli(['check', '--format', 'html', join(ROOT, 'examples/hall/hall_stale_acc.c')]).stdout;
    expect(html).toMatch(/with 2 errors in the loop \(stale-on-host\): the program is wrong until they are fixed/);
    const clean = runCli(['check', '--format', 'html', join(ROOT, 'examples/hall/hall_resident_acc.c')]).stdout;
    expect(clean).not.toMatch(/errors? in the loop/);
  });
});
