/**
 * Sizes read from the command line (or the environment) with a constant default: the analysis
 * takes the default and says so. Each form is also compiled with gcc and run without arguments,
 * and the value the program prints must be the value the analysis assumed (the program itself
 * is the source of each expectation).
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { analyzeText } from './helpers';

const gcc = spawnSync('gcc', ['--version']).status === 0;
const tmp = mkdtempSync(join(tmpdir(), 'ol-argv-'));

/** A program whose size `n` is set by `setup`, with one loop over n and a print of n. */
const program = (setup: string): string => `#include <stdio.h>
#include <stdlib.h>
int main(int argc, char **argv) {
${setup}
  double *a = malloc(n * sizeof(double));
  for (int i = 0; i < n; i++) a[i] = 0.0;
  printf("%d\\n", (int)n);
  free(a);
  return 0;
}
`;

/** What the program prints when run with no arguments and an empty environment. */
function runWithoutArguments(text: string, name: string): number | undefined {
  if (!gcc) return undefined;
  const src = join(tmp, `${name}.c`);
  const exe = join(tmp, name);
  writeFileSync(src, text);
  const c = spawnSync('gcc', ['-std=c11', '-Wall', '-Werror', src, '-o', exe], { encoding: 'utf8' });
  expect(c.stderr).toBe('');
  return Number(spawnSync(exe, [], { encoding: 'utf8', env: {} }).stdout);
}

const ARG = 'the default when no argument is given';
const ENV = 'the default when the environment does not set it';

describe('sizes from argv or the environment with a literal default', () => {
  const forms: [string, string, number, string, number][] = [
    ['a conditional initialisation', '  int n = argc > 1 ? atoi(argv[1]) : 4096;', 4096, ARG, 4],
    ['the default first in the conditional', '  long n = argc < 2 ? 1000 : strtol(argv[1], NULL, 10);', 1000, ARG, 4],
    ['if / else', '  int n;\n  if (argc > 1) n = atoi(argv[1]); else n = 2048;', 2048, ARG, 5],
    ['if / else with the default first', '  int n;\n  if (argc <= 1) {\n    n = 512;\n  } else {\n    n = atoi(argv[1]);\n  }', 512, ARG, 5],
    ['a default overridden by an argument', '  int n = 300;\n  if (argc > 1) n = atoi(argv[1]);', 300, ARG, 4],
    ['the environment', '  const char *s = getenv("OL_TEST_N");\n  int n = s ? atoi(s) : 640;', 640, ENV, 5],
  ];
  for (const [name, setup, value, when, line] of forms) {
    it(`binds ${name} to its default and says so`, async () => {
      const text = program(setup);
      // The value the program uses when run without arguments (gcc, run here).
      const printed = runWithoutArguments(text, name.replace(/\W+/g, '_'));
      if (printed !== undefined) expect(printed).toBe(value);
      const a = await analyzeText(text, 'argv.c');
      const loop = a.nests.find((n) => n.nest.root.variable === 'i')!;
      expect(loop.iterations.value).toBe(value);
      expect(loop.nest.procedure.assumptions).toEqual([`assuming n = ${value}, ${when} (line ${line}); another value: --bind n=VALUE`]);
      expect(a.findings.filter((f) => f.code === 'unknown-extent')).toEqual([]);
      // The user's binding still wins.
      const bound = await analyzeText(text, 'argv.c', { n: 64 });
      expect(bound.nests.find((n) => n.nest.root.variable === 'i')!.iterations.value).toBe(64);
    });
  }

  const symbolic: [string, string][] = [
    ['no default', '  int n = atoi(argv[1]);'],
    // Left symbolic on purpose: a macro default is how tests/fixtures/races-2 model a run-time size.
    ['a default written as a macro', '#define N0 128\n  int n = argc > 1 ? atoi(argv[1]) : N0;'],
    ['a default that is a variable', '  int m = rand();\n  int n = argc > 1 ? atoi(argv[1]) : m;'],
    ['a size assigned again later', '  int n = argc > 1 ? atoi(argv[1]) : 4096;\n  n = n * rand();'],
    ['a test on something else than the input', '  int n = rand() > 5 ? atoi(argv[1]) : 4096;'],
  ];
  for (const [name, setup] of symbolic) {
    it(`leaves n symbolic with ${name}, and says how to bind it`, async () => {
      const a = await analyzeText(program(setup), 'argv.c');
      const loop = a.nests.find((n) => n.nest.root.variable === 'i')!;
      expect(loop.iterations.value).toBeNull();
      expect(loop.nest.procedure.assumptions).toBeUndefined();
      expect(a.findings.find((f) => f.code === 'unknown-extent')?.message).toMatch(/`n` has no value the tool can see.*--bind n=<value>/);
    });
  }

  it('the text report names the assumption at the loops that rest on it, the time loop included', async () => {
    const { formatFile } = await import('../server/src/cli/text');
    const text = `#include <stdlib.h>
int main(int argc, char **argv) {
  int steps = argc > 1 ? atoi(argv[1]) : 50;
  double a[100], b[100];
  for (int i = 0; i < 100; i++) a[i] = b[i] = 0.0;
  for (int t = 0; t < steps; t++) {
#pragma acc parallel loop copy(a, b)
    for (int i = 1; i < 99; i++) b[i] = a[i - 1] + a[i + 1];
    for (int i = 1; i < 99; i++) a[i] = b[i];
  }
  return 0;
}
`;
    const a = await analyzeText(text, 'steps.c');
    expect(a.timeLoops[0].steps.value).toBe(50);
    expect(formatFile(a)).toContain('assumed (lines 5, 6, 8, 9): assuming steps = 50, the default when no argument is given (line 3); another value: --bind steps=VALUE');
  });
});

/**
 * Fortran: the same idea through `command_argument_count()` / `get_command_argument` (Fortran
 * 2003), the GNU `iargc()` / `getarg`, and `get_environment_variable`. Each fixture is compiled
 * with gfortran and run without arguments in an empty environment; the value it prints is the
 * value the analysis must assume.
 */
const FIXTURES = join(__dirname, 'fixtures', 'input-defaults');
const gfortran = spawnSync('gfortran', ['--version']).status === 0;
if (!gfortran) console.log('input-defaults (Fortran): programs not compiled (needs gfortran on the PATH)');

/** Compiles a fixture with gfortran (-Wall, no warnings) and runs it with `args`, `stdin` and an empty environment. */
function runFortran(file: string, args: string[] = [], stdin = '', cwd = tmp): string | undefined {
  if (!gfortran) return undefined;
  const exe = join(tmp, file.replace(/\.f90$/, ''));
  const c = spawnSync('gfortran', ['-Wall', '-fopenacc', join(FIXTURES, file), '-o', exe], { encoding: 'utf8', cwd: tmp });
  expect(c.stderr).toBe('');
  const r = spawnSync(exe, args, { encoding: 'utf8', env: {}, input: stdin, cwd });
  expect(r.status, r.stderr).toBe(0);
  return r.stdout.trim();
}

const lineOf = (text: string, needle: string): number => text.split('\n').findIndex((l) => l.includes(needle)) + 1;

describe('Fortran sizes from the command line or the environment with a literal default', () => {
  const forms: [string, string, number, string, string][] = [
    // file, what it shows, the default, where the note comes from, the text of the default's line
    ['arg_declared.f90', 'an initialisation and get_command_argument under command_argument_count()', 4096, ARG, 'integer :: n = 4096'],
    ['arg_assigned.f90', 'an assignment before the test, the count kept in a variable', 2048, ARG, 'n = 2048'],
    ['arg_else.f90', 'the default in the else branch of the test', 512, ARG, 'n = 512'],
    ['arg_getarg.f90', 'iargc() and getarg', 1000, ARG, 'integer :: n = 1000'],
    ['arg_status.f90', 'a read under the status= of get_command_argument', 300, ARG, 'integer :: n = 300'],
    ['env_default.f90', 'get_environment_variable with status=', 640, ENV, 'integer :: n = 640'],
  ];
  for (const [file, name, value, when, def] of forms) {
    it(`binds ${name} (${file}) to its default and says so`, async () => {
      const text = readFileSync(join(FIXTURES, file), 'utf8');
      const printed = runFortran(file);
      if (printed !== undefined) {
        expect(Number(printed)).toBe(value);
        // An argument (or the variable) changes it: the value is an input, the default only a default.
        if (when === ARG) expect(runFortran(file, ['77'])).toBe('77');
      }
      const a = await analyzeText(text, join(FIXTURES, file));
      const loop = a.nests.find((n) => n.nest.root.variable === 'i')!;
      expect(loop.iterations.value).toBe(value);
      expect(loop.nest.procedure.assumptions).toEqual([`assuming n = ${value}, ${when} (line ${lineOf(text, def)}); another value: --bind n=VALUE`]);
      expect(a.findings.filter((f) => f.code === 'unknown-extent')).toEqual([]);
      const bound = await analyzeText(text, join(FIXTURES, file), { n: 64 });
      expect(bound.nests.find((n) => n.nest.root.variable === 'i')!.iterations.value).toBe(64);
    });
  }

  it('binds the number of steps of the time loop, and in the internal procedure that sees it (steps_internal.f90)', async () => {
    const file = 'steps_internal.f90';
    const text = readFileSync(join(FIXTURES, file), 'utf8');
    const printed = runFortran(file);
    if (printed !== undefined) expect(Number(printed)).toBe(50);
    const a = await analyzeText(text, join(FIXTURES, file));
    expect(a.timeLoops[0].steps.value).toBe(50);
    const note = 'assuming nsteps = 50, the default when no argument is given (line 5); another value: --bind nsteps=VALUE';
    // `report` sees `nsteps` by host association: its loop runs nsteps times, on the same assumption.
    const k = a.nests.find((n) => n.nest.root.variable === 'k')!;
    expect(k.iterations.value).toBe(50);
    expect(k.nest.procedure.assumptions).toEqual([note]);
    const { formatFile } = await import('../server/src/cli/text');
    // Lines 13, 14 and 20 are array syntax, 15 the time loop, 17 the kernel, 29 report's loop (hand count).
    expect(formatFile(a)).toContain(`assumed (lines 13, 14, 15, 17, 20, 29): ${note}`);
  });

  it('a literal read again from standard input stays symbolic, and a finding at the read says why (stdin_read.f90)', async () => {
    const file = 'stdin_read.f90';
    const text = readFileSync(join(FIXTURES, file), 'utf8');
    // The program takes what the input says, not the 300 before the read.
    const printed = runFortran(file, [], '77\n');
    if (printed !== undefined) expect(printed).toBe('77');
    const a = await analyzeText(text, join(FIXTURES, file));
    const loop = a.nests.find((n) => n.nest.root.variable === 'i')!;
    expect(loop.iterations.value).toBeNull();
    expect(loop.nest.procedure.assumptions).toBeUndefined();
    const at = a.findings.filter((f) => f.code === 'unknown-extent' && f.range.start.line + 1 === lineOf(text, 'read(*, *) n'));
    expect(at.map((f) => f.message)).toEqual([
      '`n` is 300 in the source (line 6) but is read again from standard input at line 7, so the value a run uses is known only at run time and `n` stays symbolic; bind it with `--bind n=<value>` (or the size-bindings setting).',
    ]);
  });

  it('sizes from a namelist stay symbolic, one finding per name at the read (namelist_read.f90)', async () => {
    const file = 'namelist_read.f90';
    const text = readFileSync(join(FIXTURES, file), 'utf8');
    if (gfortran) {
      writeFileSync(join(tmp, 'grid.nml'), '&grid nx = 10, ny = 7 /\n');
      expect(runFortran(file)).toBe('70');
    }
    const a = await analyzeText(text, join(FIXTURES, file));
    expect(a.nests.find((n) => n.nest.root.variable === 'j')!.iterations.value).toBeNull();
    const at = a.findings.filter((f) => f.code === 'unknown-extent' && f.range.start.line + 1 === 10);
    expect(at.map((f) => f.message)).toEqual([
      '`nx` is 64 in the source (line 7) but is read again from the namelist /grid/ at line 10, so the value a run uses is known only at run time and `nx` stays symbolic; bind it with `--bind nx=<value>` (or the size-bindings setting).',
      '`ny` is 32 in the source (line 8) but is read again from the namelist /grid/ at line 10, so the value a run uses is known only at run time and `ny` stays symbolic; bind it with `--bind ny=<value>` (or the size-bindings setting).',
    ]);
    const bound = await analyzeText(text, join(FIXTURES, file), { nx: 10, ny: 7 });
    expect(bound.nests.find((n) => n.nest.root.variable === 'j')!.iterations.value).toBe(70);
  });

  /** A program around `setup`, as the fixtures are, for the forms that must stay symbolic. */
  const fprogram = (setup: string, after = ''): string => `program p
  implicit none
  integer :: n, i, st
  character(len=32) :: arg
  real(8), allocatable :: a(:)
${setup}
${after}
  allocate(a(n))
  do i = 1, n
    a(i) = 0.0d0
  end do
  print '(i0)', n
contains
  subroutine setup(m)
    integer, intent(inout) :: m
    m = 2 * m
  end subroutine setup
end program p
`;
  const guarded = '  if (command_argument_count() >= 1) then\n    call get_command_argument(1, arg)\n    read(arg, *) n\n  end if';
  const symbolic: [string, string, string][] = [
    ['no default', guarded, ''],
    ['a read with no test that an argument is there', '  n = 100\n  call get_command_argument(1, arg)\n  read(arg, *) n', ''],
    ['a test on something else than the command line', '  n = 100\n  st = 3\n  if (st > 1) then\n    call get_command_argument(1, arg)\n    read(arg, *) n\n  end if', ''],
    ['a size assigned again later', `  n = 100\n${guarded}`, '  n = n * 3'],
    // Fortran passes by reference: a callee may change it (as for any initialised variable, bindings.ts).
    ['a size passed whole to a procedure', `  n = 100\n${guarded}`, '  call setup(n)'],
    ['a default that is not a literal', `  st = 7\n  n = st * 2\n${guarded}`, ''],
  ];
  for (const [name, setup, after] of symbolic) {
    it(`leaves n symbolic with ${name}`, async () => {
      const text = fprogram(setup, after);
      if (gfortran) {
        const src = join(tmp, 'symbolic.f90');
        writeFileSync(src, text);
        const c = spawnSync('gfortran', ['-fsyntax-only', src], { encoding: 'utf8', cwd: tmp });
        expect(c.stderr).toBe('');
      }
      const a = await analyzeText(text, 'argv.f90');
      const loop = a.nests.find((n) => n.nest.root.variable === 'i')!;
      expect(loop.iterations.value).toBeNull();
      expect(loop.nest.procedure.assumptions).toBeUndefined();
      expect(a.findings.find((f) => f.code === 'unknown-extent')?.message).toMatch(/`n` has no value the tool can see.*--bind n=<value>/);
    });
  }
});
