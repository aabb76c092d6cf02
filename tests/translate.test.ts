/**
 * The directive translator (server/src/core/translate): OpenACC 3.3 ↔ OpenMP 5.2 target.
 * Section numbers name the rule behind each expectation (OpenACC 3.3 = "ACC §", OpenMP 5.2 =
 * "OMP §"); docs/translate.md has the whole table. Checks, from cheap to strong:
 *  - per construct and clause, both directions, C and Fortran (free and fixed form);
 *  - acc → omp → acc gives back the same directives (compared as sets, not text);
 *  - the examples, translated, compile with gcc/gfortran and print what the originals print;
 *  - the analysis of a translated example has the original's per-step and once bytes;
 *  - separate memory (clang 14 offloading to the host as a device): the translated correct
 *    ports print what gcc's OpenACC build prints, and the stale port does not.
 */
import { spawn, spawnSync } from 'node:child_process';
import { copyFileSync, mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { basename, join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { translateDirectives } from '../server/src/core/translate';
import { diffLines } from '../server/src/core/translate/diff';
import { parseItems, splitConstruct } from '../server/src/core/translate/clauses';
import { findDirectives, splitLines } from '../server/src/core/translate/scan';
import { runTranslate } from '../server/src/cli/translate';
import { ROOT, analyzeText } from './helpers';
import { translatesAlike } from '../server/src/lsp/view/refactors';

const tmp = mkdtempSync(join(tmpdir(), 'ol-translate-'));
const read = (rel: string) => readFileSync(join(ROOT, rel), 'utf8');

function omp(text: string, language: 'c' | 'cpp' | 'fortran' = 'c', fixedForm = false) {
  return translateDirectives(text, language, 'openmp', { fixedForm });
}
function acc(text: string, language: 'c' | 'cpp' | 'fortran' = 'c', fixedForm = false) {
  return translateDirectives(text, language, 'openacc', { fixedForm });
}
const line = (r: { text: string }, k: number) => r.text.split('\n')[k];

describe('OpenACC → OpenMP, C', () => {
  it('a data region becomes target data with the same block (ACC §2.6.5, §2.7.7–2.7.10 ↔ OMP §5.8.3, §13.5)', () => {
    const r = omp('#pragma acc data copy(p[0:n]) copyin(q[0:n]) copyout(r[0:n]) create(s[0:n])\n{\n  f();\n}\n');
    expect(line(r, 0)).toBe('#pragma omp target data map(tofrom: p[0:n]) map(to: q[0:n]) map(from: r[0:n]) map(alloc: s[0:n])');
    expect(r.text.split('\n').slice(1)).toEqual(['{', '  f();', '}', '']);
    expect(r.changed).toBe(1);
  });

  it('present becomes map(alloc:) with a note, because gcc 12 and clang 14 reject the 5.1 present modifier (tried here)', () => {
    const r = omp('#pragma acc parallel loop present(a[0:n])\nfor (int i = 0; i < n; i++) a[i] = 0;\n');
    expect(line(r, 1)).toBe('#pragma omp target teams distribute parallel for map(alloc: a[0:n])');
    expect(line(r, 0)).toMatch(/^\/\* offload-ledger translate: .*present\(a\[0:n\]\) \*\/$/);
    expect(r.notes).toHaveLength(1);
    expect(r.notes[0].line).toBe(0);
  });

  it('enter/exit data: copyin → to, create → alloc, copyout → from, delete → release, finalize → delete (ACC §2.7.11, OMP §5.8.3)', () => {
    const r = omp('#pragma acc enter data copyin(a[0:n]) create(b[0:n])\n#pragma acc exit data copyout(a[0:n]) delete(b[0:n])\n#pragma acc exit data delete(c) finalize\n');
    expect(r.text.split('\n').slice(0, 3)).toEqual([
      '#pragma omp target enter data map(to: a[0:n]) map(alloc: b[0:n])',
      '#pragma omp target exit data map(from: a[0:n]) map(release: b[0:n])',
      '#pragma omp target exit data map(delete: c)',
    ]);
  });

  it('update device/self/host become target update to/from; if_present is implied (ACC §2.14.4, OMP §13.9)', () => {
    const r = omp('#pragma acc update device(a[0:1]) if(k > 0)\n#pragma acc update self(a[2:3])\n#pragma acc update host(b) if_present\n');
    expect(r.text.split('\n').slice(0, 3)).toEqual([
      '#pragma omp target update to(a[0:1]) if(k > 0)',
      '#pragma omp target update from(a[2:3])',
      '#pragma omp target update from(b)',
    ]);
  });

  it('compute clauses: collapse, reduction, private, firstprivate, num_gangs → num_teams (ACC §2.5.x ↔ OMP §10.2)', () => {
    const r = omp('#pragma acc parallel loop gang vector collapse(2) reduction(+:s) private(t) firstprivate(c) num_gangs(64) copyin(a[0:n])\nfor(;;);\n');
    expect(line(r, 0)).toBe('#pragma omp target teams distribute parallel for collapse(2) reduction(+:s) private(t) firstprivate(c) num_teams(64) map(to: a[0:n])');
    expect(r.notes).toEqual([]);
  });

  it('kernels loop independent is a parallel loop; without independent it runs in one device thread (ACC §2.9.9 auto)', () => {
    expect(line(omp('#pragma acc kernels loop independent\nfor(;;);\n'), 0)).toBe('#pragma omp target teams distribute parallel for');
    const r = omp('#pragma acc kernels loop reduction(+:s)\nfor(;;) s++;\n');
    expect(r.text).toContain('#pragma omp target map(tofrom: s)');
    expect(r.notes[0].message).toMatch(/one device thread/);
  });

  it('nested acc loops: simd inside a gang loop, distribute parallel for in a parallel region, seq left out', () => {
    const src = [
      '#pragma acc parallel loop gang', 'for (int i = 0; i < n; i++) {', '#pragma acc loop vector', '  for (int j = 0; j < n; j++) a[i][j] = 0;', '}',
      '#pragma acc parallel', '{', '#pragma acc loop', '  for (int i = 0; i < n; i++) {', '#pragma acc loop seq', '    for (int j = 1; j < n; j++) a[i][j] += a[i][j-1];', '  }', '}', '',
    ].join('\n');
    const out = omp(src).text.split('\n');
    expect(out).toContain('#pragma omp simd');
    expect(out).toContain('#pragma omp target teams');
    expect(out).toContain('#pragma omp distribute parallel for');
    expect(out.find((l) => l.includes('acc loop seq'))).toMatch(/^\/\* offload-ledger translate: .*\(left out\): #pragma acc loop seq \*\/$/);
  });

  it('untranslatable: cache and tile are left out with a note (no OpenMP 5.2 counterpart gcc 12 accepts)', () => {
    const r = omp('#pragma acc parallel loop tile(32, 4)\nfor(;;) {\n#pragma acc cache(a[i:2])\n}\n');
    expect(r.text).toContain('#pragma omp target teams distribute parallel for');
    expect(r.text).toContain('(left out): #pragma acc cache(a[i:2]) */');
    expect(r.notes.map((n) => n.message).join('\n')).toMatch(/tile\(32, 4\)/);
  });

  it('routine seq wraps the function in declare target … end declare target (ACC §2.15.1 ↔ OMP §7.8)', () => {
    const r = omp('#pragma acc routine seq\nstatic float sq(float x)\n{\n  return x * x;\n}\nint main(void) { return 0; }\n');
    expect(r.text.split('\n').slice(0, 6)).toEqual(['#pragma omp declare target', 'static float sq(float x)', '{', '  return x * x;', '}', '#pragma omp end declare target']);
  });

  it('declare create at file scope becomes declare target(list) (ACC §2.13 ↔ OMP §7.8.2)', () => {
    const r = omp('float t[8];\n#pragma acc declare create(t)\n');
    expect(r.text).toContain('#pragma omp declare target(t)');
  });

  it('wait → taskwait, atomic update → atomic update (ACC §2.16.3, §2.12 ↔ OMP §15.5, §15.8.4)', () => {
    const r = omp('#pragma acc wait\n#pragma acc atomic update\nx++;\n');
    expect(r.text.split('\n').slice(0, 2)).toEqual(['#pragma omp taskwait', '#pragma omp atomic update']);
  });

  it('async is dropped with a note: the synchronous program is a valid schedule of the asynchronous one', () => {
    const r = omp('#pragma acc update self(a[0:n]) async(1)\n');
    expect(line(r, 1)).toBe('#pragma omp target update from(a[0:n])');
    expect(r.notes[0].message).toMatch(/async\(1\)/);
  });

  it('keeps continuation lines, the #pragma spelling, indentation and _Pragma operators', () => {
    const r = omp('  #  pragma acc parallel loop \\\n      copyin(a[0:n]) \\\n      copyout(b[0:n])\n  for(;;);\n#define K _Pragma("acc parallel loop copy(x[0:n])") for(;;);\n');
    expect(r.text.split('\n').slice(0, 4)).toEqual([
      '  #  pragma omp target teams distribute parallel for \\',
      '      map(to: a[0:n]) \\',
      '      map(from: b[0:n])',
      '  for(;;);',
    ]);
    expect(line(r, 4)).toBe('#define K _Pragma("omp target teams distribute parallel for map(tofrom: x[0:n])") for(;;);');
  });

  it('guards, header and simple API calls follow the model', () => {
    const r = omp('#ifdef _OPENACC\n#include <openacc.h>\n#endif\nint n = acc_get_num_devices(acc_device_nvidia);\n');
    expect(r.text).toBe('#ifdef _OPENMP\n#include <omp.h>\n#endif\nint n = omp_get_num_devices();\n');
  });

  it('a malformed directive is left unchanged with a note; lines that are not directives never change', () => {
    const src = '#pragma acc parallel loop copy(a[0:n]\nfor(;;);\n/* #pragma acc parallel loop */\nint x; // #pragma acc kernels\n';
    const r = omp(src);
    expect(r.text).toBe(src);
    expect(r.notes).toHaveLength(1);
    expect(r.notes[0].message).toMatch(/malformed/);
    expect(r.edits).toEqual([]);
  });

  it('edits applied to the input give the text', () => {
    const src = read('examples/hall/hall_resident_acc.c');
    const r = omp(src);
    expect(applyEdits(src, r.edits)).toBe(r.text);
    expect(r.edits.length).toBeGreaterThan(0);
  });
});

describe('OpenMP → OpenACC, C', () => {
  it('map types on a compute construct: to → copyin, from → copyout, tofrom → copy, alloc → create (ACC §2.7 ↔ OMP §5.8.3)', () => {
    const r = acc('#pragma omp target teams distribute parallel for simd collapse(2) map(to: a[0:n]) map(from: b[0:n]) map(tofrom: c[0:n]) map(alloc: d[0:n]) map(e[0:n])\nfor(;;);\n');
    expect(line(r, 0)).toBe('#pragma acc parallel loop collapse(2) copyin(a[0:n]) copyout(b[0:n]) copy(c[0:n]) create(d[0:n]) copy(e[0:n])');
  });

  it('target parallel for and target teams loop are parallel loops too; a reduction variable may stay in copy (gcc accepts it)', () => {
    expect(line(acc('#pragma omp target parallel for\nfor(;;);\n'), 0)).toBe('#pragma acc parallel loop');
    expect(line(acc('#pragma omp target teams loop reduction(max: e) map(tofrom: e)\nfor(;;);\n'), 0)).toBe('#pragma acc parallel loop reduction(max: e) copy(e)');
  });

  it('data directives: target data, enter/exit data (delete → finalize), target update', () => {
    const r = acc('#pragma omp target data map(tofrom: p[0:n]) map(alloc: v[0:n])\n{}\n#pragma omp target enter data map(to: a) map(alloc: b)\n#pragma omp target exit data map(from: a) map(release: b)\n#pragma omp target exit data map(delete: c)\n#pragma omp target update to(a[0:1]) from(b[0:2])\n');
    expect(r.text.split('\n')).toEqual([
      '#pragma acc data copy(p[0:n]) create(v[0:n])', '{}',
      '#pragma acc enter data copyin(a) create(b)',
      '#pragma acc exit data copyout(a) delete(b)',
      '#pragma acc exit data delete(c) finalize',
      '#pragma acc update device(a[0:1]) self(b[0:2])', '',
    ]);
  });

  it('host OpenMP outside target regions stays as it is', () => {
    const src = '#include <omp.h>\n#pragma omp parallel for reduction(+:s)\nfor(;;);\n#pragma omp critical\nx++;\ndouble t = omp_get_wtime();\n';
    const r = acc(src);
    expect(r.text).toBe(src);
  });

  it('declare target block: functions get routine seq (ACC §2.15.1)', () => {
    const r = acc('#pragma omp declare target\nfloat sq(float x) { return x * x; }\n#pragma omp end declare target\n');
    expect(r.text).toBe('#pragma acc routine seq\nfloat sq(float x) { return x * x; }\n');
  });

  it('nowait and depend are left out: the OpenACC code runs synchronously', () => {
    const r = acc('#pragma omp target update from(a[0:n]) nowait depend(out: a)\n');
    expect(r.text).toContain('#pragma acc update self(a[0:n])\n');
    expect(r.notes[0].message).toMatch(/nowait/);
  });

  it('a pointer used without a map gets a note: OMP §5.8.1 zero-length sections vs ACC §2.6.2 scalars', () => {
    const r = acc('void f(float *p, int n) {\n#pragma omp target teams distribute parallel for\nfor (int i = 0; i < n; i++) p[i] = 0;\n}\n');
    expect(r.text).toContain('#pragma acc parallel loop\n');
    expect(r.notes[0].message).toMatch(/pointer p .*present\(p\[0:n\]\)/);
  });
});

describe('Fortran', () => {
  it('free form: data region and end directives, continuation with & (ACC §2.6.5 ↔ OMP §13.5)', () => {
    const src = [
      '  !$acc data copy(h, u) &', '  !$acc& create(w)', '  !$acc parallel loop collapse(2) present(h) private(t)', '  do j = 1, n', '    do i = 1, n', '      h(i, j) = 0', '    end do', '  end do', '  !$acc end parallel loop', '  !$acc end data', '',
    ].join('\n');
    const r = omp(src, 'fortran');
    const out = r.text.split('\n');
    expect(out.slice(0, 2)).toEqual(['  !$omp target data map(tofrom: h, u) &', '  !$omp& map(alloc: w)']);
    expect(out).toContain('  !$omp target teams distribute parallel do collapse(2) map(alloc: h) private(t)');
    expect(out).toContain('  !$omp end target teams distribute parallel do');
    expect(out).toContain('  !$omp end target data');
    expect(out.some((l) => /^ {2}! offload-ledger translate: .*present\(h\)$/.test(l))).toBe(true);
  });

  it('free form OpenMP → OpenACC: end directives follow their begin directive', () => {
    const r = acc('!$omp target teams distribute parallel do map(tofrom: h)\ndo i = 1, n\n  h(i) = 1\nend do\n!$omp end target teams distribute parallel do\n', 'fortran');
    expect(r.text).toBe('!$acc parallel loop copy(h)\ndo i = 1, n\n  h(i) = 1\nend do\n!$acc end parallel loop\n');
  });

  it('fixed form keeps column 6 continuation (!$omp&) and stays within 72 columns', () => {
    const r = omp(read('tests/fixtures/translate/fixed_acc.f'), 'fortran', true);
    const out = r.text.split('\n');
    expect(out).toContain('!$omp target teams distribute parallel do reduction(+:s)');
    expect(out).toContain('!$omp& private(i)');
    expect(out).toContain('!$omp end target data');
    const long = omp('!$acc parallel loop copyin(alpha, beta, gamma, delta)\n!$acc& copyout(epsilon, zeta, eta, theta) private(i)\n      do i = 1, n\n      end do\n', 'fortran', true);
    for (const l of long.text.split('\n')) expect(l.length).toBeLessThanOrEqual(72);
    expect(long.text.split('\n').slice(0, 3)).toEqual(['!$omp target teams distribute parallel do', '!$omp& map(to: alpha, beta, gamma, delta)', '!$omp& map(from: epsilon, zeta, eta, theta) private(i)']);
  });

  it('routine seq → declare target inside the procedure; use openacc → use omp_lib', () => {
    const r = omp('module m\ncontains\n  subroutine s(x)\n    use openacc\n    !$acc routine seq\n    real :: x\n  end subroutine s\nend module m\n', 'fortran');
    expect(r.text).toContain('    use omp_lib\n    !$omp declare target\n');
  });
});

/** A directive set: construct plus sorted clauses, spacing and schedule-level words normalised. */
function directiveSet(text: string, language: 'c' | 'fortran', fixedForm = false): string[] {
  const { lines } = splitLines(text);
  const out: string[] = [];
  for (const d of findDirectives(lines, language, fixedForm)) {
    const items = parseItems(d.segments);
    const sc = items && splitConstruct(d.model, items);
    if (!sc) { out.push(`malformed ${d.body}`); continue; }
    // gang, worker, vector and independent name the schedule only (ACC §2.9.2–2.9.4, §2.9.9).
    const clauses = sc.clauses.filter((c) => !(['gang', 'worker', 'vector', 'independent'].includes(c.name) && c.args === undefined))
      .map((c) => `${c.name}${c.args !== undefined ? `(${c.args.replace(/\s+/g, '')})` : ''}`).sort();
    out.push(`${d.model} ${sc.construct}${sc.constructArgs !== undefined ? `(${sc.constructArgs})` : ''} ${clauses.join(' ')}`.trim());
  }
  return out.sort();
}

const ACC_C = ['examples/hall/hall_naive_acc.c', 'examples/hall/hall_resident_acc.c', 'examples/hall/hall_stale_acc.c', 'examples/heat2d/heat2d_acc.c', 'tests/fixtures/translate/misc_acc.c'];
const OMP_C = ['examples/hall/hall_naive_omp.c', 'examples/hall/hall_resident_omp.c', 'examples/heat2d/heat2d_omp.c'];
const ACC_F = ['examples/estuary/estuary_naive_acc.f90', 'examples/estuary/estuary_resident_acc.f90'];
const OMP_F = ['examples/estuary/estuary_naive_omp.f90', 'examples/estuary/estuary_resident_omp.f90'];

describe('round trip acc → omp → acc', () => {
  for (const file of [...ACC_C, ...ACC_F, 'tests/fixtures/translate/fixed_acc.f']) {
    it(`${file}: the same directives come back`, () => {
      const language = file.endsWith('.c') ? 'c' : 'fortran';
      const fixed = file.endsWith('.f');
      const src = read(file);
      const there = translateDirectives(src, language, 'openmp', { fixedForm: fixed });
      expect(directiveSet(there.text, language, fixed).every((d) => d.startsWith('omp'))).toBe(true);
      const back = translateDirectives(there.text, language, 'openacc', { fixedForm: fixed });
      expect(directiveSet(back.text, language, fixed)).toEqual(directiveSet(src, language, fixed));
      // Only directive, note, guard and include lines differ from the original.
      const changedLines = diffLines(src.split('\n'), back.text.split('\n')).filter((o) => o.kind !== ' ').map((o) => o.text);
      for (const l of changedLines) expect(l, l).toMatch(/^\s*(#\s*pragma|!\$|#\s*(if|include)|\/\* offload-ledger|! offload-ledger)/);
    });
  }
  for (const file of OMP_C) {
    it(`${file}: omp → acc → omp gives back the same directives`, () => {
      const src = read(file);
      const back = translateDirectives(translateDirectives(src, 'c', 'openacc').text, 'c', 'openmp');
      expect(directiveSet(back.text, 'c')).toEqual(directiveSet(src, 'c'));
    });
  }
});

// ---- compile and run ----------------------------------------------------------------------------

const have = (cmd: string, args = ['--version']) => { const r = spawnSync(cmd, args, { encoding: 'utf8' }); return !r.error && r.status === 0; };
const gcc = have('gcc');
const gfortran = have('gfortran');
if (!gcc) console.log('skipped: gcc not found, so translated C examples cannot be compiled');
if (!gfortran) console.log('skipped: gfortran not found, so translated Fortran examples cannot be compiled');

const HALL_SMALL = ['-DNX=40', '-DNY=30', '-DNZ=20', '-DSTEPS=30'];
const HEAT_SMALL = ['-DNX=64', '-DNY=48', '-DSTEPS=21'];
const smallOf = (file: string) => (file.includes('heat2d') ? HEAT_SMALL : file.includes('hall') ? HALL_SMALL : []);

/** Runs a command without blocking the test worker (long synchronous runs starve vitest's RPC). */
function exec(cmd: string, args: string[], env: NodeJS.ProcessEnv = process.env): Promise<{ status: number | null; stdout: string; stderr: string }> {
  return new Promise((resolve, reject) => {
    const p = spawn(cmd, args, { env });
    let stdout = '';
    let stderr = '';
    const timer = setTimeout(() => p.kill('SIGKILL'), 170_000);
    p.stdout.on('data', (d) => (stdout += d));
    p.stderr.on('data', (d) => (stderr += d));
    p.on('error', reject);
    p.on('close', (status) => { clearTimeout(timer); resolve({ status, stdout, stderr }); });
  });
}

async function runExe(exe: string, env: Record<string, string> = {}): Promise<string> {
  const r = await exec(exe, [], { ...process.env, OMP_NUM_THREADS: '1', ...env });
  expect(r.status, `${exe}: ${r.stderr}`).toBe(0);
  return r.stdout;
}

async function buildC(src: string, name: string, flags: string[], cc = 'gcc', env: NodeJS.ProcessEnv = process.env): Promise<string> {
  const c = join(tmp, `${name}.c`);
  writeFileSync(c, src);
  const exe = join(tmp, name);
  const r = await exec(cc, ['-O1', '-std=c11', ...flags, c, '-o', exe, '-lm'], env);
  expect(r.status, `${cc} ${flags.join(' ')} ${name}\n${r.stderr}`).toBe(0);
  return exe;
}

const SIZE_LINE = 'nx = 800, ny = 300, nsteps = 2000';
const SMALL_SIZES = 'nx = 40, ny = 30, nsteps = 300';
async function buildF(src: string, name: string, flag: string, ext = 'f90'): Promise<string> {
  const f = join(tmp, `${name}.${ext}`);
  writeFileSync(f, src.replace(SIZE_LINE, SMALL_SIZES));
  const exe = join(tmp, name);
  const r = await exec('gfortran', ['-O1', flag, `-J${tmp}`, f, '-o', exe]);
  expect(r.stderr, `gfortran ${flag} ${name}`).toBe('');
  expect(r.status).toBe(0);
  return exe;
}

describe.skipIf(!gcc)('translated C examples compile with gcc and print what the originals print (host fallback)', () => {
  for (const file of [...ACC_C, ...OMP_C]) {
    it(file, async () => {
      const toOmp = file.includes('_acc');
      const src = read(file);
      const name = basename(file, '.c');
      const flags = (model: string) => [model === 'acc' ? '-fopenacc' : '-fopenmp', '-Wall', ...smallOf(file)];
      const original = await runExe(await buildC(src, `${name}_orig`, flags(toOmp ? 'acc' : 'omp')));
      const t = translateDirectives(src, 'c', toOmp ? 'openmp' : 'openacc');
      const translated = await runExe(await buildC(t.text, `${name}_tr`, flags(toOmp ? 'omp' : 'acc')));
      expect(translated).toBe(original);
      expect(original.length).toBeGreaterThan(0);
    }, 120_000);
  }
});

describe.skipIf(!gfortran)('translated Fortran examples compile with gfortran and print what the originals print', () => {
  for (const file of [...ACC_F, ...OMP_F]) {
    it(file, async () => {
      const toOmp = file.includes('_acc');
      const src = read(file);
      const name = basename(file, '.f90');
      const original = await runExe(await buildF(src, `${name}_orig`, toOmp ? '-fopenacc' : '-fopenmp'));
      const t = translateDirectives(src, 'fortran', toOmp ? 'openmp' : 'openacc');
      expect(await runExe(await buildF(t.text, `${name}_tr`, toOmp ? '-fopenmp' : '-fopenacc'))).toBe(original);
    }, 120_000);
  }
  it('tests/fixtures/translate/fixed_acc.f (fixed form)', async () => {
    const src = read('tests/fixtures/translate/fixed_acc.f');
    const original = await runExe(await buildF(src, 'fixed_orig', '-fopenacc', 'f'));
    const t = translateDirectives(src, 'fortran', 'openmp', { fixedForm: true });
    expect(await runExe(await buildF(t.text, 'fixed_tr', '-fopenmp', 'f'))).toBe(original);
  }, 60_000);
});

describe('the ledger of a translated example equals the original\'s', () => {
  // misc_acc.c has no time loop; the examples each have one.
  for (const file of [...ACC_C.filter((f) => f.startsWith('examples/')), ...OMP_C, ...ACC_F, ...OMP_F]) {
    it(file, async () => {
      const language = file.endsWith('.c') ? 'c' : 'fortran';
      const src = read(file);
      const t = translateDirectives(src, language, file.includes('_acc') ? 'openmp' : 'openacc');
      const path = join(ROOT, file);
      const [a, b] = await Promise.all([analyzeText(src, path), analyzeText(t.text, path)]);
      const bytes = (r: typeof a) => r.timeLoops.map((tl) => tl.ledger && {
        perStep: [tl.ledger.perStep.toDevice.value, tl.ledger.perStep.toHost.value],
        once: [tl.ledger.once.toDevice.value, tl.ledger.once.toHost.value],
      });
      expect(bytes(a).length).toBeGreaterThan(0);
      expect(bytes(b)).toEqual(bytes(a));
    }, 60_000);
  }
});

// ---- separate memory ----------------------------------------------------------------------------

const LLVM_BIN = '/usr/lib/llvm-14/bin';
const clangEnv = { ...process.env, PATH: `${LLVM_BIN}:${process.env.PATH ?? ''}` };
const clangOffload = (() => {
  if (!gcc) return false;
  const probe = join(tmp, 'probe.c');
  writeFileSync(probe, 'int main(void){int x=0;\n#pragma omp target map(tofrom: x)\nx=1;\nreturn x==1?0:1;}\n');
  const r = spawnSync('clang', ['-fopenmp', '-fopenmp-targets=x86_64-pc-linux-gnu', probe, '-o', join(tmp, 'probe')], { encoding: 'utf8', env: clangEnv });
  if (r.error || r.status !== 0) return false;
  const run = spawnSync(join(tmp, 'probe'), [], { env: { ...process.env, OMP_TARGET_OFFLOAD: 'MANDATORY' } });
  return run.status === 0;
})();
if (!clangOffload) console.log('skipped: clang 14 with -fopenmp-targets=x86_64-pc-linux-gnu (libomptarget) not found, so the separate-memory runs cannot be made');

describe.skipIf(!clangOffload)('separate memory: translated OpenACC ports built with clang offloading to the host', () => {
  const cases: [string, boolean][] = [
    ['examples/hall/hall_naive_acc.c', true],
    ['examples/hall/hall_resident_acc.c', true],
    ['examples/heat2d/heat2d_acc.c', true],
    // Its missing updates lose the source pulse and read stale microphones once memory is separate.
    ['examples/hall/hall_stale_acc.c', false],
  ];
  for (const [file, same] of cases) {
    it(`${file}: ${same ? 'same output as gcc -fopenacc' : 'output differs from gcc -fopenacc (stale data)'}`, async () => {
      const src = read(file);
      const name = basename(file, '.c');
      const reference = await runExe(await buildC(src, `${name}_ref`, ['-fopenacc', ...smallOf(file)]));
      const t = translateDirectives(src, 'c', 'openmp');
      const exe = await buildC(t.text, `${name}_sep`, ['-fopenmp', '-fopenmp-targets=x86_64-pc-linux-gnu', '-Wno-unknown-pragmas', ...smallOf(file)], 'clang', clangEnv);
      const separate = await runExe(exe, { OMP_TARGET_OFFLOAD: 'MANDATORY' });
      if (same) expect(separate).toBe(reference);
      else expect(separate).not.toBe(reference);
    }, 180_000);
  }
});

// ---- CLI ----------------------------------------------------------------------------------------

describe('runTranslate', () => {
  const io = () => {
    const o = { out: [] as string[], err: [] as string[] };
    return { o, io: { stdout: (s: string) => o.out.push(s), stderr: (s: string) => o.err.push(s) } };
  };
  it('prints a unified diff by default and leaves the file alone', async () => {
    const f = join(tmp, 'heat2d_acc.c');
    copyFileSync(join(ROOT, 'examples/heat2d/heat2d_acc.c'), f);
    const { o, io: x } = io();
    expect(await runTranslate([f, '--to', 'openmp'], x)).toBe(0);
    const out = o.out.join('\n');
    expect(out).toMatch(/^--- a\//);
    expect(out).toContain('-#pragma acc parallel loop collapse(2)\n+#pragma omp target teams distribute parallel for collapse(2)');
    expect(out).toMatch(/@@ -\d+,\d+ \+\d+,\d+ @@/);
    expect(readFileSync(f, 'utf8')).toBe(read('examples/heat2d/heat2d_acc.c'));
  });
  it('--write rewrites the file in place', async () => {
    const f = join(tmp, 'estuary_resident_omp.f90');
    copyFileSync(join(ROOT, 'examples/estuary/estuary_resident_omp.f90'), f);
    const { io: x } = io();
    expect(await runTranslate([f, '--to', 'openacc', '--write'], x)).toBe(0);
    expect(readFileSync(f, 'utf8')).toContain('!$acc data copy(h, u, v) create(hn, un, vn)');
  });
  it('exit 2 for usage errors and unreadable input', async () => {
    const { o, io: x } = io();
    expect(await runTranslate([join(tmp, 'nope.c'), '--to', 'openmp'], x)).toBe(2);
    expect(await runTranslate([join(ROOT, 'examples/heat2d/heat2d_acc.c')], x)).toBe(2);
    expect(await runTranslate([join(ROOT, 'examples/heat2d/heat2d_acc.c'), '--to', 'cuda'], x)).toBe(2);
    expect(await runTranslate([join(ROOT, 'README.md'), '--to', 'openmp'], x)).toBe(2);
    expect(o.err.join('\n')).toMatch(/cannot be read/);
  });
});

function applyEdits(text: string, edits: { range: { start: { line: number; character: number }; end: { line: number; character: number } }; newText: string }[]): string {
  const lines = text.split('\n');
  const offset = (p: { line: number; character: number }) => lines.slice(0, p.line).reduce((s, l) => s + l.length + 1, 0) + p.character;
  let out = text;
  for (const e of [...edits].sort((a, b) => offset(b.range.start) - offset(a.range.start))) {
    out = out.slice(0, offset(e.range.start)) + e.newText + out.slice(offset(e.range.end));
  }
  return out;
}

// The editor keeps a document's last translation while typing changes only code lines
// (server/src/lsp/view/refactors.ts translatesAlike): checked here against the translator
// itself on random edits of every C/C++ example and fixture with directives.
describe('the editor keeps a translation while code lines change', () => {
  const files = [...spawnSync('git', ['ls-files', 'examples', 'tests/fixtures'], { cwd: ROOT, encoding: 'utf8' }).stdout.split('\n')]
    .filter((f) => /\.(c|cpp|cc)$/.test(f)).filter((f) => /#\s*pragma\s+(acc|omp)/.test(read(f)));
  it('finds C and C++ sources with directives', () => {
    expect(files.length).toBeGreaterThan(10);
  });
  // A small deterministic generator, so a failure repeats.
  let seed = 7;
  const rand = (n: number): number => {
    seed = (seed * 1103515245 + 12345) & 0x7fffffff;
    return seed % n;
  };
  const edits = [
    (l: string) => l.replace(/\b[A-Za-z_]\w*\b(?!.*\b(for|if|while|do|else|switch)\b)/, 'zq'),
    (l: string) => l.replace(/\d+(\.\d+)?/, '17'),
    (l: string) => l.replace(/;\s*$/, ''),
    (l: string) => l.replace(/\)/, ') + 1'),
    (l: string) => `${l} /* typed */`,
    (l: string) => l.replace(/\bfor\b/, 'zfor'),
    (l: string) => l.replace(/\]/, ' + 2]'),
    (l: string) => l.replace(/\+/, '-'),
    (l: string) => l.replace(/=/, '= {'),
    (l: string) => l.replace(/\w+/, '"s"'),
    (l: string) => l.replace(/;/, '; x = 1;'),
  ];
  it('whenever it keeps one, a fresh translation makes the same edits and notes (both directions)', () => {
    let kept = 0;
    let fresh = 0;
    for (const f of files) {
      const text = read(f);
      const lang = f.endsWith('.c') ? 'c' : 'cpp';
      for (const to of ['openmp', 'openacc'] as const) {
        const base = translateDirectives(text, lang, to);
        if (base.changed === 0) continue;
        for (let k = 0; k < 12; k++) {
          const lines = text.split('\n');
          for (let e = 1 + rand(3); e > 0; e--) {
            const i = rand(lines.length);
            lines[i] = edits[rand(edits.length)](lines[i]);
          }
          const after = lines.join('\n');
          if (!translatesAlike(text, after, to)) { fresh++; continue; }
          kept++;
          const t = translateDirectives(after, lang, to);
          const changedLines = lines.flatMap((l, i) => (l === text.split('\n')[i] ? [] : [`${i + 1}: ${text.split('\n')[i]} → ${l}`]));
          expect({ edits: t.edits, notes: t.notes, changed: t.changed }, `${f} → ${to}, edit ${k}: ${changedLines.join(' | ')}`).toEqual({ edits: base.edits, notes: base.notes, changed: base.changed });
        }
      }
    }
    // Both answers were exercised.
    expect(kept).toBeGreaterThan(50);
    expect(fresh).toBeGreaterThan(50);
  });
});
