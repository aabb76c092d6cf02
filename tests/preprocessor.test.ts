/**
 * The analysis preprocessor: conditional inclusion (C11 §6.10.1), macro replacement (§6.10.3),
 * headers, `_OPENACC`/`_OPENMP` (OpenACC 3.3 §2.2: 202211; OpenMP 5.2 §3.1: 202111), and the
 * agreement with a real compiler: `gcc -E` keeps the same lines active as this tool does.
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { evaluateCondition } from '../server/src/core/preprocessor/condition';
import { type MacroDef, expandText, parseDefine } from '../server/src/core/preprocessor/macros';
import { preprocess } from '../server/src/core/preprocessor';
import { fileReport } from '../server/src/core/report';
import { ROOT, analyzeText } from './helpers';

const FIXTURES = join(ROOT, 'tests', 'fixtures', 'preprocessor');

function table(...defs: string[]): Map<string, MacroDef> {
  const m = new Map<string, MacroDef>();
  for (const d of defs) {
    const def = parseDefine(d);
    if (def) m.set(def.name, def);
  }
  return m;
}

describe('#if expressions (C11 §6.10.1)', () => {
  const macros = table('V 3', 'HALO (1 << 1)', 'SQ(x) ((x)*(x))', 'EMPTY');
  it.each([
    ['V >= 2 && HALO == 2', true],
    ['defined(V) && !defined NOPE', true],
    ['SQ(HALO) == 4', true],
    ['(V % 2 == 1) ? 0 : 1', false],
    ['0x10 == 16 && 010 == 8 && 0b11 == 3', true],
    ["'A' == 65", true],
    ['202211L >= 201711', true],
    ['-1 < 0', true],
    ['defined(EMPTY)', true],
    ['__GNUC__ >= 100', false], // reserved names are the compiler's: replaced by 0 as the standard says
  ])('%s is %s', (expr, want) => {
    expect(evaluateCondition(expr, macros, false)).toEqual({ known: true, value: want });
  });

  it('names a user macro without a value instead of guessing 0', () => {
    expect(evaluateCondition('USE_GPU && V > 1', macros, false)).toEqual({ known: false, unknown: ['USE_GPU'] });
  });

  it('a broken expression is unknown, not an exception', () => {
    expect(evaluateCondition('(V + ', macros, false).known).toBe(false);
    expect(evaluateCondition('1 / 0', macros, false).known).toBe(false);
  });
});

describe('macro replacement (C11 §6.10.3)', () => {
  it('expands object-like and function-like macros, nested, with # and ##', () => {
    const m = table('N 64', 'IDX(i,j) ((j)*N+(i))', 'CAT(a,b) a##b', 'STR(x) #x', 'TWICE(x) IDX(x,x)');
    expect(expandText('IDX(i+1, j)', m).text).toBe('((j)*64+(i+1))');
    expect(expandText('TWICE(k)', m).text).toBe('((k)*64+(k))');
    expect(expandText('CAT(u, new)[0]', m).text).toBe('unew[0]');
    expect(expandText('STR(a + b)', m).text).toBe('"a + b"');
  });

  it('a macro is not expanded inside its own expansion (§6.10.3.4)', () => {
    const m = table('foo foo + 1', 'f(x) f(x) * 2');
    expect(expandText('foo', m).text).toBe('foo + 1');
    expect(expandText('f(3)', m).text).toBe('f(3) * 2');
  });

  it('variadic macros take __VA_ARGS__', () => {
    const m = table('ACC(...) acc __VA_ARGS__');
    expect(expandText('ACC(parallel, loop)', m).text).toBe('acc parallel, loop');
  });

  it('top-level-only expansion keeps clause arguments as written', () => {
    const m = table('N 64', 'CL present(u[0:N])');
    expect(expandText(' parallel loop CL copy(v[0:N])', m, { topLevelOnly: true }).text).toBe(' parallel loop present(u[0:N]) copy(v[0:N])');
  });

  it('an argument list that never closes is reported, not thrown', () => {
    const m = table('F(a) a');
    const e = expandText('x F(1, 2', m);
    expect(e.unterminated).toEqual(['F']);
  });
});

describe('preprocess', () => {
  const opts = { path: '/src/a.c', language: 'c' as const };

  it('keeps every line and column; blanks inactive lines and the conditionals', () => {
    const text = '#ifdef _OPENACC\n#pragma acc parallel loop\n#else\n#pragma omp parallel for\n#endif\nfor (;;) {}\n';
    const pp = preprocess(text, { ...opts, model: 'openacc' });
    const lines = pp.text.split('\n');
    expect(lines).toHaveLength(text.split('\n').length);
    expect(lines.map((l, k) => l.length === text.split('\n')[k].length)).not.toContain(false);
    expect(lines[1]).toBe('#pragma acc parallel loop');
    expect(lines[3].trim()).toBe('');
    expect(lines[0].trim()).toBe('');
    expect(pp.macros.get('_OPENACC')?.body).toBe('202211'); // OpenACC 3.3 §2.2
    expect(preprocess(text, { ...opts, model: 'openmp' }).macros.get('_OPENMP')?.body).toBe('202111'); // OpenMP 5.2 §3.1
  });

  // C11 §6.10.9: `_Pragma("…")` is the `#pragma` line it spells; a macro may produce it.
  it('reads a `_Pragma` operator, direct or through macros defined in the file or with -D, as the #pragma line it stands for', () => {
    const text = [
      '#define PRAGMA(x) _Pragma(#x)',
      '#define ACC(x) PRAGMA(acc x)',
      '',
      '_Pragma("acc parallel loop")',
      'PRAGMA(omp target teams distribute parallel for)',
      'ACC(kernels loop)',
      'OFFLOAD_LOOP',
      'int after = 1;',
    ].join('\n');
    const lines = preprocess(text, { ...opts, model: 'both', defines: new Map([['OFFLOAD_LOOP', '_Pragma("acc loop gang")']]) }).text.split('\n');
    expect(lines[3].trimEnd()).toBe('#pragma acc parallel loop');
    expect(lines[4].trimEnd()).toBe('#pragma omp target teams distribute parallel for');
    expect(lines[5].trimEnd()).toBe('#pragma acc kernels loop');
    expect(lines[6].trimEnd()).toBe('#pragma acc loop gang');
    expect(lines[7]).toBe('int after = 1;');
    // A -D macro alone (no #define in the file holds `_Pragma`).
    expect(preprocess('OFFLOAD_LOOP\nint x;\n', { ...opts, defines: new Map([['OFFLOAD_LOOP', '_Pragma("acc loop gang")']]) }).text.split('\n')[0].trimEnd()).toBe('#pragma acc loop gang');
    // Without any macro holding `_Pragma`, a line naming a macro stays as written.
    expect(preprocess('#define LOOP for\nLOOP (;;) {}\n', opts).text.split('\n')[1]).toBe('LOOP (;;) {}');
  });

  it('chooses the model from the directives the file holds', () => {
    expect(preprocess('#pragma omp target\n', opts).models).toEqual(['openmp']);
    expect(preprocess('#pragma acc kernels\n#pragma omp parallel for\n', opts).models).toEqual(['openacc']);
    expect(preprocess('int x;\n', opts).models).toEqual([]);
  });

  it('user defines and undefines apply; -U removes a predefined macro', () => {
    const text = '#if defined(FAST) && !defined(_OPENACC)\nint fast;\n#endif\n#pragma acc kernels\n';
    const pp = preprocess(text, { ...opts, defines: new Map([['FAST', '1']]), undefines: ['_OPENACC'] });
    expect(pp.text.split('\n')[1]).toBe('int fast;');
  });

  it('reads quoted headers through the caller, relative to the file then the include folders', () => {
    const files: Record<string, string> = { '/inc/params.h': '#define NX 100\n#include "more.h"\n', '/inc/more.h': '#define NY (2*NX)\n' };
    const pp = preprocess('#include "params.h"\n#include <stdio.h>\n', { ...opts, includeDirs: ['/inc'], readInclude: (p) => files[p] });
    expect(pp.macros.get('NY')?.body).toBe('(2*NX)');
    expect(pp.included).toEqual(['/inc/params.h', '/inc/more.h']);
    expect(pp.findings).toEqual([]);
  });

  it('a missing header is an info finding that says where it looked', () => {
    const pp = preprocess('#include "nowhere.h"\n', { ...opts, readInclude: () => undefined });
    expect(pp.findings).toHaveLength(1);
    expect(pp.findings[0].severity).toBe('info');
    expect(pp.findings[0].message).toContain('--include-dir');
  });

  it('include cycles stop', () => {
    const files: Record<string, string> = { '/src/a.h': '#include "b.h"\n#define A 1\n', '/src/b.h': '#include "a.h"\n#define B 1\n' };
    const pp = preprocess('#include "a.h"\n', { ...opts, readInclude: (p) => files[p] });
    expect(pp.macros.has('A') && pp.macros.has('B')).toBe(true);
  });

  it('an unterminated conditional and a stray #endif are findings, never exceptions', () => {
    const pp = preprocess('#if 1\nint a;\n#endif\n#endif\n#ifdef X\nint b;\n', opts);
    expect(pp.findings.map((f) => `${f.code}@${f.range.start.line}`)).toEqual(['directive-syntax@3', 'directive-syntax@4']);
  });

  it('an inactive branch with offload directives is said once, naming the switch', () => {
    const text = '#ifdef USE_GPU\n#pragma acc parallel loop\n#endif\nfor(;;){}\n#ifdef USE_GPU\n#pragma acc update self(a)\n#endif\n';
    const pp = preprocess(text, opts);
    expect(pp.findings).toHaveLength(1);
    expect(pp.findings[0].code).toBe('inactive-offload-branch');
    expect(pp.findings[0].message).toContain('--define USE_GPU');
    expect(pp.findings[0].message).toContain('1 more inactive branch');
  });

  it('an #if it cannot evaluate analyses the first branch and says so', () => {
    const text = '#if GPU_LEVEL > 1\n#pragma acc parallel loop\n#else\n#pragma omp target teams loop\n#endif\nfor(;;){}\n';
    const pp = preprocess(text, opts);
    expect(pp.text.split('\n')[1]).toBe('#pragma acc parallel loop');
    expect(pp.findings[0].message).toContain('`GPU_LEVEL` has no value here, so the first branch (line 1) was analysed');
  });
});

// ---------------------------------------------------------------------------------------------
// Agreement with gcc: the lines gcc -E keeps are the lines this tool keeps.

const gccProbe = spawnSync('gcc', ['--version'], { encoding: 'utf8' });
const haveGcc = !gccProbe.error && gccProbe.status === 0;
if (!haveGcc) console.log('skipped: gcc not found, so the preprocessor cannot be compared with gcc -E');

/** Source lines that hold code once comments are removed (what both preprocessors can be compared on). */
function codeLines(text: string): Set<number> {
  const noComments = text.replace(/\/\*[\s\S]*?\*\/|\/\/[^\n]*/g, (c) => c.replace(/[^\n]/g, ' '));
  const out = new Set<number>();
  noComments.split('\n').forEach((l, k) => {
    const t = l.trim();
    if (t !== '' && (!t.startsWith('#') || /^#\s*pragma\b/.test(t))) out.add(k);
  });
  return out;
}

/** 0-based lines of `file` that gcc -E emits with content. */
function gccActiveLines(file: string, flags: string[]): Set<number> {
  const r = spawnSync('gcc', ['-E', ...flags, file], { encoding: 'utf8', timeout: 60_000 });
  expect(r.status, r.stderr).toBe(0);
  const out = new Set<number>();
  let current = '';
  let line = 0;
  for (const l of r.stdout.split('\n')) {
    const marker = /^# (\d+) "([^"]*)"/.exec(l);
    if (marker) {
      line = Number(marker[1]) - 1;
      current = marker[2];
      continue;
    }
    if (current === file && l.trim() !== '') out.add(line);
    line++;
  }
  return out;
}

const CONFIGS: { name: string; gcc: string[]; model?: 'openacc' | 'openmp'; defines?: [string, string][] }[] = [
  // gcc 12 defines _OPENACC as 201711 and _OPENMP as 201511; both are set to the 3.3 / 5.2 values here.
  { name: 'serial', gcc: [] },
  { name: 'openacc', gcc: ['-fopenacc', '-U_OPENACC', '-D_OPENACC=202211'], model: 'openacc' },
  { name: 'openmp', gcc: ['-fopenmp', '-U_OPENMP', '-D_OPENMP=202111'], model: 'openmp' },
  { name: 'single, NX=20', gcc: ['-DUSE_SINGLE', '-DNX=20'], defines: [['USE_SINGLE', '1'], ['NX', '20']] },
  { name: 'long, debug 2', gcc: ['-DUSE_LONG', '-DDEBUG_LEVEL=2'], defines: [['USE_LONG', '1'], ['DEBUG_LEVEL', '2']] },
];

describe.skipIf(!haveGcc)('gcc -E agrees on the active lines', () => {
  it.each(CONFIGS.map((c) => [c.name, c] as const))('conditionals.c, %s', (_n, cfg) => {
    const file = join(FIXTURES, 'conditionals.c');
    const text = readFileSync(file, 'utf8');
    const pp = preprocess(text, {
      path: file, language: 'c', model: cfg.model ?? ('none' as const), defines: new Map(cfg.defines ?? []),
      readInclude: (p) => { try { return readFileSync(p, 'utf8'); } catch { return undefined; } },
    });
    const ours = new Set([...codeLines(text)].filter((k) => pp.text.split('\n')[k].trim() !== ''));
    const theirs = new Set([...gccActiveLines(file, cfg.gcc)].filter((k) => codeLines(text).has(k)));
    expect([...ours].sort((a, b) => a - b)).toEqual([...theirs].sort((a, b) => a - b));
    expect(ours.size).toBeGreaterThan(10);
  });

  it.each([['openacc', ['-fopenacc']], ['openmp', ['-fopenmp']]] as const)('jacobi_macro.c keeps the same pragma lines under %s', (model, flags) => {
    const file = join(FIXTURES, 'jacobi_macro.c');
    const text = readFileSync(file, 'utf8');
    const pp = preprocess(text, { path: file, language: 'c', model, readInclude: (p) => readFileSync(p, 'utf8') });
    const pragmas = (t: string): number[] => t.split('\n').flatMap((l, k) => (/^\s*#\s*pragma/.test(l) ? [k] : []));
    const theirs = [...gccActiveLines(file, [...flags])].filter((k) => pragmas(text).includes(k));
    expect(pragmas(pp.text)).toEqual(theirs);
    expect(theirs).toHaveLength(2);
  });
});

describe.skipIf(!haveGcc)('preprocessor fixtures compile and run alike in every model', () => {
  let dir: string | undefined;
  afterAll(() => { if (dir) rmSync(dir, { recursive: true, force: true }); });
  /** Builds one fixture with each flag and returns what each build prints. */
  const outputs = (compiler: string, file: string, flags: string[], extra: string[]): string[] => {
    dir ??= mkdtempSync(join(tmpdir(), 'offload-ledger-pp-'));
    return flags.map((flag, k) => {
      const exe = join(dir!, `${file.replace(/\W/g, '_')}${k}`);
      const c = spawnSync(compiler, [flag, '-O2', '-Wall', ...extra, join(FIXTURES, file), '-o', exe], { encoding: 'utf8', cwd: dir });
      expect(c.status, c.stderr).toBe(0);
      const r = spawnSync(exe, [], { encoding: 'utf8', env: { ...process.env, OMP_NUM_THREADS: '2' } });
      expect(r.status).toBe(0);
      return r.stdout;
    });
  };

  it('jacobi_macro.c prints one checksum with OpenACC, OpenMP and no offload', () => {
    const sums = outputs('gcc', 'jacobi_macro.c', ['-fopenacc', '-fopenmp', '-O2'], ['-Werror', '-std=c11', '-lm']);
    expect(sums[1]).toBe(sums[0]);
    expect(sums[2]).toBe(sums[0]);
  });

  it('sweep_models.F90 prints one checksum with gfortran -cpp under OpenACC, OpenMP and no offload', () => {
    if (spawnSync('gfortran', ['--version']).status !== 0) {
      console.log('skipped: gfortran not found');
      return;
    }
    const sums = outputs('gfortran', 'sweep_models.F90', ['-fopenacc', '-fopenmp', '-O2'], ['-cpp']);
    expect(sums[1]).toBe(sums[0]);
    expect(sums[2]).toBe(sums[0]);
  });
});

describe('figures through the preprocessor', () => {
  it('7-point Jacobi through an index macro that takes the array: 8 flops, 16 device bytes', async () => {
    const file = join(FIXTURES, 'jacobi_macro.c');
    for (const directives of ['openacc', 'openmp'] as const) {
      const a = await analyzeText(readFileSync(file, 'utf8'), file, undefined, undefined, undefined, { directives });
      const loops = (fileReport(a) as { loops: { line: number; flopsPerIteration: number; bytesPerIteration: { device: number }; iterations: { value: number }; directive: string }[] }).loops;
      const sweep = loops.find((l) => l.line === 23)!;
      // 3-D 7-point Jacobi: 6 adds and 2 multiplies, read u once and write unew once (STREAM
      // convention, McCalpin): 8 flops and 16 bytes per iteration in double precision.
      expect(sweep.flopsPerIteration).toBe(8);
      expect(sweep.bytesPerIteration.device).toBe(16);
      // Sizes from the local header grid.h: (32-2)*(40-2)*(48-2) iterations (hand count).
      expect(sweep.iterations.value).toBe(30 * 38 * 46);
      expect(sweep.directive).toBe(directives);
      expect(a.findings.filter((f) => f.severity === 'error')).toEqual([]);
    }
  });

  it('a clause list through a macro reads without directive-syntax errors', async () => {
    const text = '#define CL collapse(2) present(a[0:n*n])\n#define GUARD if(n > 64)\nvoid f(double *a, int n) {\n#pragma acc parallel loop CL GUARD\nfor (int j = 0; j < n; j++)\n  for (int i = 0; i < n; i++) a[j*n+i] = 0;\n}\n#pragma omp requires atomic_default_mem_order(seq_cst)\n';
    const a = await analyzeText(text, 'cl.c');
    expect(a.findings.filter((f) => f.code === 'directive-syntax')).toEqual([]);
    const d = a.model.directives.find((x) => x.construct === 'parallel loop')!;
    expect(d.clauses.map((c) => c.canonical)).toEqual(['collapse', 'present', 'if']);
    expect(d.macroExpanded).toBe(true);
  });
});

describe('compiler flags (the editor setting and compilation databases)', () => {
  it('reads -D, -U, -I in joined and separate forms, the model flags, and ignores the rest', async () => {
    const { readCompilerFlags, splitCommandLine } = await import('../server/src/core/preprocessor/flags');
    const words = splitCommandLine(`-O3 -DUSE_GPU -D NX=512 -DMSG='"a b"' -U_OPENMP -Iinclude -I "my dir" -isystem /opt/x -fopenacc -march=native`);
    expect(words).toContain('-DMSG="a b"');
    const f = readCompilerFlags(words);
    expect(f.defines).toEqual([['USE_GPU', '1'], ['NX', '512'], ['MSG', '"a b"']]);
    expect(f.undefines).toEqual(['_OPENMP']);
    expect(f.includeDirs).toEqual(['include', 'my dir', '/opt/x']);
    expect(f.directives).toBe('openacc');
    expect(readCompilerFlags(['-fopenacc', '-fopenmp']).directives).toBe('both');
    expect(readCompilerFlags(['-D']).unreadable).toEqual(['-D']);
  });
});

describe('CLI preprocessor options', () => {
  it('-D, -I and --directives reach the analysis; a bad -D is a usage error', async () => {
    const { runCli } = await import('./helpers');
    const file = join(FIXTURES, 'jacobi_macro.c');
    const plain = JSON.parse(runCli(['check', '--format', 'json', file]).stdout);
    expect(plain.files[0].directives).toEqual(['openacc']);
    const omp = JSON.parse(runCli(['check', '--format', 'json', '--directives', 'openmp', '-D', 'NX=100', file]).stdout);
    expect(omp.files[0].directives).toEqual(['openmp']);
    // NX=100 from -D wins over the header's #ifndef NX default of 48: (32-2)*(40-2)*(100-2) iterations.
    expect(omp.files[0].loops.find((l: { line: number }) => l.line === 23).iterations.value).toBe(30 * 38 * 98);
    const bad = runCli(['check', '-D', '1X', file]);
    expect(bad.status).toBe(2);
    expect(bad.stderr).toContain('--define expects NAME or NAME=VALUE');
  });
});

describe('generated stencil code', () => {
  it('an offset written with a signed literal (`(i+-1)*n+(j+0)`) is a stencil neighbour, not an irregular read', async () => {
    // A 4-point star written the way code generators print offsets: out read and written, in read
    // once with neighbours reused: 24 bytes per iteration (STREAM convention, McCalpin); 4
    // multiplies, 3 adds and the += make 8 flops (hand count).
    const text = 'void star(int n, const double *restrict in, double *restrict out) {\n#pragma acc parallel loop\nfor (int i=1; i<n-1; i++)\n  for (int j=1; j<n-1; j++)\n    out[i*n+j] += in[(i+-1)*n+(j+0)] * -0.5 + in[(i+0)*n+(j+-1)] * -0.5 + in[(i+0)*n+(j+1)] * 0.5 + in[(i+1)*n+(j+0)] * 0.5;\n}\n';
    const a = await analyzeText(text, 'star.c');
    const loop = (fileReport(a) as { loops: { flopsPerIteration: number; bytesPerIteration: { device: number }; footprint: { array: string; irregular: boolean; radius: number[] }[] }[] }).loops[0];
    expect(loop.flopsPerIteration).toBe(8);
    expect(loop.bytesPerIteration.device).toBe(24);
    expect(loop.footprint.find((f) => f.array === 'in')).toMatchObject({ irregular: false, radius: [1, 1] });
  });
});

describe('object-like macros that name an element', () => {
  it('`#define C u[j][i]` on both sides of an assignment reads and writes those elements', async () => {
    // v = 0.5*u[j][i] + 0.25*(u[j][i+1] + u[j][i-1]): 2 multiplies and 2 adds (4 flops); u read once
    // with neighbours reused, v written once: 16 bytes per iteration in double (STREAM convention, McCalpin).
    const text = '#define N 256\n#define C u[j][i]\n#define E u[j][i+1]\n#define W u[j][i-1]\n#define OUT v[j][i]\nstatic double u[N][N], v[N][N];\nvoid f(void) {\n#pragma acc parallel loop collapse(2)\n  for (int j = 1; j < N-1; j++) for (int i = 1; i < N-1; i++) OUT = 0.5*C + 0.25*(E + W);\n}\n';
    const loop = (fileReport(await analyzeText(text, 'om.c')) as { loops: { flopsPerIteration: number; bytesPerIteration: { device: number }; footprint: { array: string; writes: number }[] }[] }).loops[0];
    expect(loop.flopsPerIteration).toBe(4);
    expect(loop.bytesPerIteration.device).toBe(16);
    expect(loop.footprint.find((f) => f.array === 'v')?.writes).toBe(1);
  });
});
