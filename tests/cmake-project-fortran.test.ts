/**
 * A Fortran project as users have it, built with CMake (our own sources, in
 * tests/fixtures/cmake-fortran/): a module of sizes (src/params.F90, preprocessed, its sizes from
 * include/grid.h, which the build overrides with -DGRID_NX=512), a module of device-resident
 * fields in its own file (src/fields.f90: allocatable arrays under `!$acc declare create`),
 * kernels in src/kernels/ that `use` both modules, one of them (boundary.F90) with its directive
 * under `#ifdef USE_GPU`, and a main program whose time loop calls them and whose number of steps
 * is the first argument (200 without one).
 *
 * CMake writes compile_commands.json (CMAKE_EXPORT_COMPILE_COMMANDS, CMake documentation; the
 * Makefile generators write Fortran entries too, as CMake 3.25 here does). If a CMake writes no
 * Fortran entries, the test writes them as CMake would (`directory`, `command`, `file`, the
 * target's -D and -I flags and CMAKE_Fortran_FLAGS), says so and goes on, so the checks of the
 * ledger still run. The ledger read through the database must equal the ledger with the same
 * flags given by hand, must change when USE_GPU is switched off, and both programs must build
 * with the CMake build and run. Skips, saying why, without cmake or gfortran.
 */
import { spawnSync } from 'node:child_process';
import { cpSync, existsSync, mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { runCli } from './helpers';

const have = (cmd: string): boolean => spawnSync(cmd, ['--version']).status === 0;
const tools = have('cmake') && have('gfortran');
if (!tools) console.log('cmake-project-fortran: skipped (needs cmake and gfortran on the PATH)');

const FIXTURE = join(__dirname, 'fixtures', 'cmake-fortran');
/** The sources in the order CMakeLists.txt lists them. */
const SOURCES = ['src/params.F90', 'src/fields.f90', 'src/kernels/diffuse.f90', 'src/kernels/boundary.F90', 'src/main.f90'];
const CONFIGURE = ['-DCMAKE_EXPORT_COMPILE_COMMANDS=ON', '-DCMAKE_Fortran_COMPILER=gfortran', '-DCMAKE_Fortran_FLAGS=-fopenacc'];

interface Report {
  files: {
    path: string;
    loops: { line: number; offloaded: boolean; iterations: { value: number | null; expr?: string }; assumptions?: string[] }[];
    timeLoops: {
      line: number;
      steps: { value: number | null; expr?: string };
      perStep: { toDevice: { value: number }; toHost: { value: number } };
      transfers: { line: number; array: string; direction: string; bytes: { value: number } }[];
      residentBytes: number;
    }[];
    findings: { code: string; line: number; message: string }[];
  }[];
}

interface Entry { directory: string; file: string; command?: string; arguments?: string[] }

describe.skipIf(!tools)('a Fortran CMake project read through compile_commands.json', () => {
  let dir: string;
  let plain: string;
  /** Set when CMake wrote no Fortran entries and the test wrote them (see the file's comment). */
  let written = false;
  const sh = (cmd: string, args: string[]): string => {
    const r = spawnSync(cmd, args, { cwd: dir, encoding: 'utf8' });
    expect(r.status, `${cmd} ${args.join(' ')}: ${r.stderr}`).toBe(0);
    return r.stdout;
  };
  const run = (cwd: string, args: string[], format = 'json'): string => {
    const r = runCli(['check', '--format', format, ...args], cwd);
    expect(r.stderr).toBe('');
    return r.stdout;
  };
  /** In the project: its database applies (found in ./build, or named). */
  const check = (...args: string[]): Report => JSON.parse(run(dir, args));
  /** The same sources in a folder with no database: only the flags given count. */
  const byHand = (...args: string[]): Report => JSON.parse(run(plain, args));
  const file = (r: Report, path: string) => r.files.find((f) => f.path === path)!;

  /**
   * The entries CMake's Makefile generator writes for a Fortran target: one per source, the
   * compiler with the target's definitions, include directories, CMAKE_Fortran_FLAGS and the
   * module directory, run in the build folder.
   */
  function ensureFortranEntries(build: string, gpu: boolean): void {
    const path = join(dir, build, 'compile_commands.json');
    const db = existsSync(path) ? (JSON.parse(readFileSync(path, 'utf8')) as Entry[]) : [];
    if (db.some((e) => /\.f90$/i.test(e.file))) return;
    written = true;
    const defines = ['-DGRID_NX=512', ...(gpu ? ['-DUSE_GPU'] : [])];
    const entries: Entry[] = SOURCES.map((s) => ({
      directory: join(dir, build),
      command: ['/usr/bin/gfortran', ...defines, `-I${join(dir, 'include')}`, '-fopenacc', '-Jmodules', '-c', join(dir, s), '-o', `CMakeFiles/heat.dir/${s}.o`].join(' '),
      file: join(dir, s),
    }));
    writeFileSync(path, JSON.stringify(entries, null, 2));
  }

  beforeAll(() => {
    dir = mkdtempSync(join(tmpdir(), 'ol-cmake-f-'));
    plain = mkdtempSync(join(tmpdir(), 'ol-cmake-f-plain-'));
    for (const root of [dir, plain]) cpSync(FIXTURE, root, { recursive: true });
    sh('cmake', ['-S', '.', '-B', 'build', ...CONFIGURE, '-DUSE_GPU=ON']);
    sh('cmake', ['-S', '.', '-B', 'build-cpu', ...CONFIGURE, '-DUSE_GPU=OFF']);
    ensureFortranEntries('build', true);
    ensureFortranEntries('build-cpu', false);
    if (written) console.log('cmake-project-fortran: this CMake wrote no Fortran entries; the test wrote them as CMake does');
  });

  it('CMake wrote a database with each Fortran file and its flags', () => {
    const db = JSON.parse(readFileSync(join(dir, 'build', 'compile_commands.json'), 'utf8')) as Entry[];
    expect(db.map((e) => e.file.slice(dir.length + 1)).sort()).toEqual([...SOURCES].sort());
    for (const e of db) {
      const cmd = e.command ?? e.arguments!.join(' ');
      expect(cmd).toMatch(/-DGRID_NX=512 .*-DUSE_GPU .*-I\S*include .*-fopenacc/);
    }
    const cpu = JSON.parse(readFileSync(join(dir, 'build-cpu', 'compile_commands.json'), 'utf8')) as Entry[];
    for (const e of cpu) expect(e.command ?? e.arguments!.join(' ')).not.toMatch(/-DUSE_GPU/);
  });

  it('the ledger through the database equals the ledger with the same flags by hand', () => {
    // `check` with no files: the project's files from ./build/compile_commands.json.
    const viaDb = check();
    const hand = byHand('-D', 'GRID_NX=512', '-D', 'USE_GPU', '-I', 'include', '--directives', 'openacc', 'src');
    expect(viaDb).toEqual(hand);
    expect(viaDb.files.map((f) => f.path)).toEqual([...SOURCES].sort());
    // The text report too, assumptions included.
    expect(run(dir, [], 'text')).toBe(run(plain, ['-D', 'GRID_NX=512', '-D', 'USE_GPU', '-I', 'include', '--directives', 'openacc', 'src'], 'text'));
  });

  it('the time loop follows its calls into src/kernels/ and finds the fields resident', () => {
    const main = file(check(), 'src/main.f90');
    const tl = main.timeLoops[0];
    expect(tl.line).toBe(17); // `do t = 1, nsteps` (hand count)
    // The number of steps comes from the command line with a literal default: 200, said so.
    expect(tl.steps).toEqual({ value: 200, expr: 'nsteps' });
    expect(run(dir, ['src/main.f90'], 'text')).toContain('assumed (line 17): assuming nsteps = 200, the default when no argument is given (line 8); another value: --bind nsteps=VALUE');
    // u and un are `declare create`d in fields.f90 and only `present` in the kernels: nothing
    // moves per step, and both stay on the device: 2 × 512 × 128 real(8) = 1 MiB (hand count).
    expect(tl.perStep.toDevice.value).toBe(0);
    expect(tl.perStep.toHost.value).toBe(0);
    expect(tl.transfers).toEqual([]);
    expect(tl.residentBytes).toBe(1048576);
    expect(main.findings).toEqual([]);
  });

  it('a `use` of a module of another file resolves its parameters and its arrays', () => {
    const r = check();
    // diffuse.f90 uses params (nx, ny from grid.h and -DGRID_NX=512) and fields (u, un):
    // (ny - 2) × (nx - 2) = 126 × 510 interior points (hand count), on the device.
    const diffuse = file(r, 'src/kernels/diffuse.f90');
    expect(diffuse.loops.map((l) => [l.line, l.offloaded, l.iterations.value])).toEqual([[10, true, 64260], [16, true, 64260]]);
    expect(diffuse.findings).toEqual([]);
    // boundary.F90: ny = GRID_NY = 128 rows (hand count).
    expect(file(r, 'src/kernels/boundary.F90').loops.map((l) => [l.line, l.offloaded, l.iterations.value])).toEqual([[15, true, 128]]);
    // fields.f90 allocates u(nx, ny): 512 × 128 = 65,536 elements per whole-array assignment (hand count).
    expect(file(r, 'src/fields.f90').loops.map((l) => l.iterations.value)).toEqual([65536, 65536]);
    // Without the build's -DGRID_NX the header's default (256) applies: 126 × 254 points.
    const defaults = byHand('-D', 'USE_GPU', '-I', 'include', '--directives', 'openacc', 'src');
    expect(file(defaults, 'src/kernels/diffuse.f90').loops[0].iterations.value).toBe(32004);
    // Without -I include, grid.h is not found: the sizes stay symbolic, named as such.
    const bare = byHand('-D', 'GRID_NX=512', '-D', 'USE_GPU', '--directives', 'openacc', 'src');
    expect(file(bare, 'src/kernels/diffuse.f90').loops[0].iterations.value).toBeNull();
  });

  it('switching USE_GPU off in the build changes the ledger, as by hand', () => {
    const gpu = check();
    const cpu = check('--compile-commands', 'build-cpu/compile_commands.json');
    expect(cpu).toEqual(byHand('-D', 'GRID_NX=512', '-I', 'include', '--directives', 'openacc', 'src'));
    expect(cpu).not.toEqual(gpu);
    const boundary = (r: Report) => file(r, 'src/kernels/boundary.F90');
    expect(boundary(gpu).loops[0].offloaded).toBe(true);
    expect(boundary(cpu).loops[0].offloaded).toBe(false);
    expect(boundary(gpu).findings.map((f) => `${f.code}@${f.line}`)).toEqual(['inactive-offload-branch@12']);
    expect(boundary(cpu).findings.map((f) => `${f.code}@${f.line}`)).toEqual(['inactive-offload-branch@10', 'transfer-in-time-loop@13', 'transfer-in-time-loop@20']);
    // The host sets the edges: `update self(u)` and `update device(u)` move all of u each step,
    // 512 × 128 real(8) = 512 KiB each way (hand count), reached from the call at line 18.
    const tl = file(cpu, 'src/main.f90').timeLoops[0];
    expect(tl.perStep.toDevice.value).toBe(524288);
    expect(tl.perStep.toHost.value).toBe(524288);
    expect(tl.transfers.map((t) => [t.line, t.array, t.direction, t.bytes.value])).toEqual([[13, 'u', 'toHost', 524288], [20, 'u', 'toDevice', 524288]]);
  });

  it('both programs build with the CMake build and run to the same result', () => {
    sh('cmake', ['--build', 'build']);
    sh('cmake', ['--build', 'build-cpu']);
    const gpu = sh(join(dir, 'build', 'heat'), []);
    const cpu = sh(join(dir, 'build-cpu', 'heat'), []);
    // The mean temperature after 200 steps, heat let in from the left edge.
    expect(gpu).toMatch(/^\s*0\.\d{6}\n$/);
    expect(cpu).toBe(gpu);
    // A run with an argument uses it: fewer steps, less heat let in.
    expect(Number(sh(join(dir, 'build', 'heat'), ['10']))).toBeLessThan(Number(gpu));
  });
});
