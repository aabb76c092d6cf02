/**
 * Fortran idioms that depend on how names are found (issue 10, "Fortran names"): names in any
 * case, modules defined in other files of the same check, and arrays of a host procedure used
 * in its internal procedures. The programs under tests/fixtures/fortran-idioms/ are compiled and
 * run with gfortran (without a GPU its OpenACC and OpenMP target code runs on the host), and
 * their analyses are checked against figures counted by hand from the source.
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { analyzeSource, buildModel, type FileAnalysis } from '../server/src/core/analyze';
import { userKeys } from '../server/src/core/analysis/bindings';
import { buildFortranModel } from '../server/src/core/frontend/fortran';
import { forEachCallInValue } from '../server/src/core/model/values';
import { ownModelInWorkspace } from '../server/src/core/model/workspace';
import * as S from '../server/src/core/symbolic';
import { fileReport } from '../server/src/core/report';
import { ROOT, analyzeFile, analyzeText, grammarsForTests, runCli } from './helpers';

const DIR = 'tests/fixtures/fortran-idioms';
const at = (file: string): string => join(ROOT, DIR, file);
const source = (file: string): string => readFileSync(at(file), 'utf8');

const probe = spawnSync('gfortran', ['--version'], { encoding: 'utf8' });
const haveGfortran = !probe.error && probe.status === 0;
if (!haveGfortran) console.log('skipped: gfortran not found, so the Fortran idiom programs cannot be compiled');

interface Quantity { value: number | null; expr: string; unbound?: string[] }
interface Transfer { line: number; array: string; direction: string; bytes: Quantity }
interface TimeLoop { line: number; steps: Quantity; perStep: { toDevice: Quantity; toHost: Quantity }; transfers: Transfer[] }
interface Report {
  path: string;
  loops: { line: number; iterations: Quantity }[];
  timeLoops: TimeLoop[];
  findings: { code: string; line: number; severity: string; message: string }[];
}

const report = (a: FileAnalysis): Report => {
  expect(a.internalErrors).toEqual([]);
  return fileReport(a) as unknown as Report;
};
const iterations = (r: Report, line: number): number | null | undefined => r.loops.find((l) => l.line === line)?.iterations.value;
const errors = (r: Report): string[] => r.findings.filter((f) => f.severity === 'error').map((f) => `${f.code}@${f.line}`);
const codes = (r: Report): string[] => r.findings.map((f) => f.code);

/** Analyses files together, as the CLI does: every model first, then each file with the others as its workspace. */
async function analyzeTogether(files: string[], order: string[] = files): Promise<Map<string, Report>> {
  const g = await grammarsForTests();
  const inputs = order.map((f) => ({ path: at(f), text: source(f), language: 'fortran' as const }));
  const models = inputs.map((i) => buildModel(i, g));
  const out = new Map<string, Report>();
  inputs.forEach((input, k) => out.set(order[k], report(analyzeSource({ ...input, model: models[k] }, g, { workspace: models }))));
  return out;
}

let workDir: string | undefined;
afterAll(() => {
  if (workDir) rmSync(workDir, { recursive: true, force: true });
});

/** Compiles the files into one program and runs it; returns its standard output. */
function compileAndRun(files: string[], flag: '-fopenacc' | '-fopenmp', name: string, args: string[] = []): string {
  workDir ??= mkdtempSync(join(tmpdir(), 'offload-ledger-idioms-'));
  const dir = mkdtempSync(join(workDir, `${name}-`));
  const exe = join(dir, name);
  // Each build has its own module directory and runs there, because two builds (or other
  // suites) may define modules of one name and gfortran reads .mod files from its directory too.
  const cc = ['-O2', '-Wall', flag, `-J${dir}`, ...files.map(at), '-o', exe];
  const c = spawnSync('gfortran', cc, { cwd: dir, encoding: 'utf8', timeout: 120_000 });
  if (c.error) throw c.error;
  expect(c.stderr, `gfortran ${cc.join(' ')}`).toBe('');
  expect(c.status).toBe(0);
  const env = { ...process.env, OMP_NUM_THREADS: '2', OMP_WAIT_POLICY: 'passive' };
  const r = spawnSync(exe, args, { encoding: 'utf8', timeout: 60_000, env });
  if (r.error) throw r.error;
  expect(r.status, r.stderr).toBe(0);
  return r.stdout;
}

describe.skipIf(!haveGfortran)('the idiom programs compile and run with gfortran', () => {
  it('mixed_case.f90 (OpenACC) keeps the total of its pulse', () => {
    const out = compileAndRun(['mixed_case.f90'], '-fopenacc', 'mixed_case');
    // Hand count: the 1/4, 1/2, 1/4 average keeps the sum (1) while the pulse stays away from
    // both ends; after 200 steps it has spread about √100 = 10 cells from cell 256 of 513.
    expect(out).toContain('sum   1.00000000E+00');
    // The length is read at run time: 201 cells keep the pulse 100 cells (10 spreads) from
    // either end, so the sum is the same to 8 digits (hand count).
    expect(compileAndRun(['mixed_case.f90'], '-fopenacc', 'mixed_case_201', ['201'])).toContain('sum   1.00000000E+00');
  });

  it('params_mod.f90 + heat_main.f90 (OpenACC, two files) keep the heat total', () => {
    const out = compileAndRun(['params_mod.f90', 'heat_main.f90'], '-fopenacc', 'heat');
    // Hand count: the explicit five-point update keeps the total (1000) while the heat stays
    // inside; after 100 steps with alpha 0.2 it has spread only a few cells from (256, 64).
    expect(out).toContain('sum   1.00000000E+03');
  });

  it.each([
    ['host_assoc.f90', '-fopenacc'],
    ['host_assoc_omp.f90', '-fopenmp'],
  ] as const)('%s (%s) sums the edges the internal procedure copies back', (file, flag) => {
    const out = compileAndRun([file], flag, file.replace('.f90', ''));
    // Hand count: field starts at 1 and each step maps f to f/2 + 1/4, so after k steps
    // f_k = 1/2 + 2^-(k+1). Each step adds two edge columns of 256 values: 512 f_k, and the
    // 50 steps add 512 (25 + (1 - 2^-50)/2) = 13,056 (to 8 digits). The field ends at
    // 64 × 256 × f_50 = 8,192.
    expect(out).toContain('edges   1.30560000E+04');
    expect(out).toContain('sum   8.19200000E+03');
  });

  it('chain/ (OpenACC, four files, a module using a module of another file) keeps the field at one', () => {
    const out = compileAndRun(['chain/kinds.f90', 'chain/fields.f90', 'chain/smooth.f90', 'chain/driver.f90'], '-fopenacc', 'chain');
    // Hand count: averaging neighbours of a field of ones gives ones; 1000 values sum to 1000.
    expect(out).toContain('sum   1000.000');
  });
});

describe('Fortran names are matched in any case', () => {
  it('a user binding in upper case binds the lower-cased name (--bind M_LEN=513)', async () => {
    for (const key of ['M_LEN', 'm_len', 'M_Len']) {
      const r = report(await analyzeText(source('mixed_case.f90'), at('mixed_case.f90'), { [key]: 513 }));
      // Hand count: `do I = 2, m_len - 1` and `do k = 2, LEN - 1` (LEN = M_len at the call) run 513 - 2 = 511 times.
      expect(iterations(r, 25), key).toBe(511);
      expect(iterations(r, 43), key).toBe(511);
      expect(codes(r)).not.toContain('unknown-extent');
      const tl = r.timeLoops[0];
      expect(tl.line).toBe(22); // the `do STEP` line of mixed_case.f90 (hand count)
      expect(tl.steps.value).toBe(200); // `do STEP = 1, 200` (hand count)
      // `!$Acc Update Self(WAVE(1:M_Len))`: 513 real(8) values = 4,104 bytes per step (hand count);
      // the clause's `WAVE` is the array declared as `Wave`.
      expect(tl.perStep.toHost.value).toBe(4104);
      expect(tl.perStep.toDevice.value).toBe(0); // enter data before the loop; nothing goes to the device per step (hand count)
      expect(tl.transfers.map((t) => [t.line, t.array, t.direction, t.bytes.value])).toEqual([[28, 'wave', 'toHost', 4104]]);
      expect(errors(r)).toEqual([]);
    }
  });

  it('without the binding the length is named as unknown (control)', async () => {
    const r = report(await analyzeText(source('mixed_case.f90'), at('mixed_case.f90')));
    expect(iterations(r, 25)).toBeNull();
    expect(r.findings.find((f) => f.code === 'unknown-extent')?.message).toContain('`m_len`');
  });

  it('the CLI binds --bind M_LEN=513 in a Fortran file', () => {
    const r = runCli(['check', '--format', 'json', '--bind', 'M_LEN=513', `${DIR}/mixed_case.f90`]);
    expect(r.stderr).toBe('');
    const file = JSON.parse(r.stdout).files[0] as Report;
    expect(iterations(file, 25)).toBe(511); // 513 - 2 (hand count)
    expect(file.timeLoops[0].perStep.toHost.value).toBe(4104); // 513 × 8 bytes (hand count)
  });

  it('symbols the analysis names itself keep their spelling (trips_L12 binds in any case)', () => {
    // Common practice: a user types the symbol as the message prints it, or in any case.
    expect(userKeys({ language: 'fortran' }, 'TRIPS_L12')).toContain('trips_L12');
    expect(userKeys({ language: 'fortran' }, 'NX')).toEqual(['NX', 'nx']);
    // C names are case-sensitive (C11 §6.4.2.1): the key stays as written.
    expect(userKeys({ language: 'c' }, 'NX')).toEqual(['NX']);
  });
});

describe('modules defined in other files of the check', () => {
  const pair = ['params_mod.f90', 'heat_main.f90'];

  it('binds the sizes and reads the arrays of `use params` (params_mod.f90 checked with heat_main.f90)', async () => {
    const r = (await analyzeTogether(pair)).get('heat_main.f90')!;
    // Hand count: `t = 0.0d0` covers nx × ny = 512 × 128 = 65,536 elements; each kernel runs
    // (nx - 2) × (ny - 2) = 510 × 126 = 64,260 iterations.
    expect(iterations(r, 11)).toBe(65536);
    expect(iterations(r, 19)).toBe(64260);
    expect(iterations(r, 25)).toBe(64260);
    const tl = r.timeLoops[0];
    expect(tl.line).toBe(17); // the `do step` line of heat_main.f90 (hand count)
    expect(tl.steps.value).toBe(100); // nsteps = 100 in params_mod.f90 (hand count)
    // The module's `!$acc declare create(T, T_New)` keeps both fields on the device (OpenACC 3.3
    // §2.13), so the kernels move nothing; `update self(t(1:nx, ny / 2))` moves 512 real(8)
    // values = 4,096 bytes per step (hand count).
    expect(tl.perStep.toDevice.value).toBe(0);
    expect(tl.perStep.toHost.value).toBe(4096);
    expect(tl.transfers.map((t) => [t.line, t.array, t.direction, t.bytes.value])).toEqual([[30, 't', 'toHost', 4096]]);
    // No false loop-carried dependence (the stencil reads t and writes t_new: a Jacobi sweep),
    // no unbound size and no other error.
    expect(errors(r)).toEqual([]);
    expect(codes(r)).not.toContain('unknown-extent');
  });

  it('gives the same figures whatever the order of the files', async () => {
    const a = (await analyzeTogether(pair)).get('heat_main.f90')!;
    const b = (await analyzeTogether(pair, [...pair].reverse())).get('heat_main.f90')!;
    expect(b.loops).toEqual(a.loops);
    expect(b.timeLoops.map((t) => t.perStep)).toEqual(a.timeLoops.map((t) => t.perStep));
    expect(b.findings).toEqual(a.findings);
  });

  it('checked alone, heat_main.f90 cannot see the module and says which sizes are unknown (control)', async () => {
    const r = report(await analyzeText(source('heat_main.f90'), at('heat_main.f90')));
    const unknown = r.findings.filter((f) => f.code === 'unknown-extent').map((f) => f.message.match(/^`(\w+)`/)?.[1]);
    expect(unknown.sort()).toEqual(['nsteps', 'nx', 'ny']);
  });

  it('the CLI checks the two files together', () => {
    const r = runCli(['check', '--format', 'json', ...pair.map((f) => `${DIR}/${f}`)]);
    expect(r.stderr).toBe('');
    const main = (JSON.parse(r.stdout).files as Report[]).find((f) => f.path.endsWith('heat_main.f90'))!;
    expect(iterations(main, 19)).toBe(64260); // 510 × 126 (hand count)
    expect(main.timeLoops[0].perStep.toHost.value).toBe(4096); // 512 × 8 bytes (hand count)
    expect(errors(main)).toEqual([]);
  });

  it('leaves the other file\'s model as it was (heat_main\'s allocate gives its own copy of t its extents)', async () => {
    const g = await grammarsForTests();
    const params = buildModel({ path: at('params_mod.f90'), text: source('params_mod.f90'), language: 'fortran' }, g);
    const main = { path: at('heat_main.f90'), text: source('heat_main.f90'), language: 'fortran' as const };
    report(analyzeSource(main, g, { workspace: [params] }));
    // `real(8), allocatable :: T(:, :)`: deferred extents stay symbols in the module's own file.
    expect(params.globals.find((d) => d.name === 't')?.dims.map(String)).toEqual(['extent(t,1)', 'extent(t,2)']);
  });

  const chain = ['chain/kinds.f90', 'chain/fields.f90', 'chain/smooth.f90', 'chain/driver.f90'];

  it('follows a module that uses a module of a third file, and a renamed size (chain/)', async () => {
    const reports = await analyzeTogether(chain);
    const driver = reports.get('chain/driver.f90')!;
    const tl = driver.timeLoops[0];
    expect(tl.steps.value).toBe(10); // `do s = 1, 10` (hand count)
    // `real(wp)` with `wp => sp` and sp = kind(1.0) = 4 bytes (gfortran's default real, common
    // practice): `update self(a(1:m))` with m => n = 1000 moves 4,000 bytes per step (hand count).
    expect(tl.perStep.toHost.value).toBe(4000);
    expect(tl.perStep.toDevice.value).toBe(0); // the module's declare keeps a and b present
    expect(errors(driver)).toEqual([]);
    // smooth.f90's kernels run n - 2 = 998 iterations (hand count).
    const smooth = reports.get('chain/smooth.f90')!;
    expect([iterations(smooth, 7), iterations(smooth, 11)]).toEqual([998, 998]);
    expect(errors(smooth)).toEqual([]);
  });

  it('counts a module\'s `declare copyin` once, where the main program uses the module', async () => {
    const g = await grammarsForTests();
    const text = (f: string): string => (f.endsWith('fields.f90') ? source(f).replace('declare create(a, b)', 'declare copyin(a, b)') : source(f));
    const inputs = chain.map((f) => ({ path: at(f), text: text(f), language: 'fortran' as const }));
    expect(inputs[1].text).toContain('declare copyin(a, b)');
    const models = inputs.map((i) => buildModel(i, g));
    const driver = report(analyzeSource({ ...inputs[3], model: models[3] }, g, { workspace: models }));
    const tl = driver.timeLoops[0] as TimeLoop & { once: { toDevice: Quantity } };
    // OpenACC 3.3 §2.13: the copy is made when the program starts, 2 × 1000 × 4 bytes (hand count),
    // not per step, and smooth's own `use fields` copies nothing again (no already-present note).
    // "Once" also counts the `update device(a, b)` before the loop: another 8,000 bytes.
    expect(tl.once.toDevice.value).toBe(16000);
    expect(tl.perStep.toDevice.value).toBe(0); // as with `declare create` above (hand count)
    expect(codes(driver)).not.toContain('already-present');
  });

  it('resolves an editor document that is not among its workspace models', async () => {
    const g = await grammarsForTests();
    const others = chain.filter((f) => !f.endsWith('driver.f90')).map((f) => buildModel({ path: at(f), text: source(f), language: 'fortran' }, g));
    const doc = { path: at('chain/driver.f90'), text: source('chain/driver.f90'), language: 'fortran' as const };
    const r = report(analyzeSource(doc, g, { workspace: others }));
    expect(r.timeLoops[0].perStep.toHost.value).toBe(4000); // 1000 × 4 bytes, as above (hand count)
    // The document's own model as the workspace reads it binds fields' n = 1000 (hand count).
    const own = ownModelInWorkspace(buildModel(doc, g), others);
    expect(S.evaluate(own.bindings.get('n')!, new Map())).toBe(1000);
  });
});

describe('host association in internal procedures', () => {
  it.each(['host_assoc.f90', 'host_assoc_omp.f90'])('%s: the internal procedure\'s update moves the host\'s array', async (file) => {
    const r = report(await analyzeText(source(file), at(file)));
    const tl = r.timeLoops[0];
    expect(tl.line).toBe(13); // the `do step` line (hand count)
    expect(tl.steps.value).toBe(50); // nsteps = 50 (hand count)
    // Two edge columns field(1:nx, 1) and field(1:nx, ny) of 256 real(8) values: 2,048 bytes
    // each, 4,096 bytes per step (hand count); the data region keeps field on the device.
    expect(tl.transfers.map((t) => [t.line, t.array, t.direction, t.bytes.value])).toEqual([
      [35, 'field', 'toHost', 2048],
      [36, 'field', 'toHost', 2048],
    ]);
    expect(tl.perStep.toHost.value).toBe(4096);
    expect(tl.perStep.toDevice.value).toBe(0); // the data region around the loop keeps field present (hand count)
    // relax's kernel over the host array runs nx × ny = 16,384 iterations (hand count).
    expect(iterations(r, 26)).toBe(16384);
    expect(errors(r)).toEqual([]);
  });

  it('without the updates, the host reads of the host array in the internal procedure are stale (control)', async () => {
    const text = source('host_assoc.f90').replace(/^\s*!\$acc update self\(field.*\n/gm, '');
    const r = report(await analyzeText(text, at('host_assoc.f90')));
    // OpenACC 3.3 §2.6: the device wrote field in relax, and exchange reads it on the host.
    expect(r.findings.filter((f) => f.code === 'stale-on-host').length).toBeGreaterThan(0);
    expect(r.timeLoops[0].perStep.toHost.value).toBe(0); // no update left in the loop (hand count)
  });

  it('links only names that resolve to the host: a dummy of the same name shadows the host array', () => {
    const text = [
      'program shade',
      '  implicit none',
      '  real(8) :: w(10), v(10)',
      '  w = 1.0d0',
      '  v = 2.0d0',
      '  call scale(v)',
      '  print *, total() + w(1)',
      'contains',
      '  subroutine scale(w)',
      '    real(8), intent(inout) :: w(10)',
      '    w = 2.0d0 * w',
      '  end subroutine scale',
      '  real(8) function total()',
      '    total = sum(v)',
      '  end function total',
      'end program shade',
    ].join('\n');
    const model = buildFortranModel(text, 'shade.f90');
    const proc = (n: string) => model.procedures.find((p) => p.name === n)!;
    // Fortran 2008 §16.5.1.4: a local (here a dummy) of the same name hides the host's entity.
    expect(proc('scale').params.map((p) => p.name)).toEqual(['w']);
    // The internal function reads the host's v: it becomes its parameter, and the reference
    // `total()` in the host's print passes v there.
    expect(proc('total').params.map((p) => p.name)).toEqual(['v']);
    const print = proc('shade').body.find((st) => st.kind === 'other' && st.text.startsWith('print'));
    const calls: { name: string; args: unknown[] }[] = [];
    for (const v of print && print.kind === 'other' ? print.values : []) forEachCallInValue(v, (c) => calls.push({ name: c.name, args: c.args }));
    expect(calls.find((c) => c.name === 'total')?.args).toEqual([{ kind: 'var', name: 'v' }]);
  });

  it('an internal procedure of a subroutine moves the array its host received as an argument', async () => {
    const text = [
      'program outer',
      '  implicit none',
      '  integer, parameter :: n = 300',
      '  real(8) :: h(n)',
      '  integer :: step',
      '  h = 0.0d0',
      '  !$acc data copy(h)',
      '  do step = 1, 20',
      '    call advance(h, n)',
      '  end do',
      '  !$acc end data',
      'contains',
      '  subroutine advance(u, m)',
      '    integer, intent(in) :: m',
      '    real(8), intent(inout) :: u(m)',
      '    integer :: i',
      '    !$acc parallel loop present(u)',
      '    do i = 1, m',
      '      u(i) = u(i) + 1.0d0',
      '    end do',
      '    call pull()',
      '  contains',
      '    subroutine pull()',
      '      !$acc update self(u(1:m))',
      '      print *, u(1)',
      '    end subroutine pull',
      '  end subroutine advance',
      'end program outer',
    ].join('\n');
    const r = report(await analyzeText(text, 'outer.f90'));
    // Fortran 2008 §16.5.1.4 (host association): pull's `u` is advance's dummy, which is h here;
    // the update moves n = 300 real(8) values of h = 2,400 bytes per step (hand count).
    expect(r.timeLoops[0].transfers.map((t) => [t.line, t.array, t.bytes.value])).toEqual([[24, 'h', 2400]]);
    expect(errors(r)).toEqual([]);
  });
});

describe('a Fortran loop over tiles says what it picks in Fortran', () => {
  it('names the picked element `chunk%tiles(tile)`, as the source writes it, not with C brackets', async () => {
    const a = await analyzeFile(`${DIR}/tiles_components.f90`);
    expect(a.notTimeLoops).toHaveLength(1);
    expect(a.notTimeLoops[0].reason).toContain('picked by `tile` (`chunk%tiles(tile)`');
    expect(a.notTimeLoops[0].reason).not.toMatch(/\[/);
  });
});
