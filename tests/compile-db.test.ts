/**
 * The JSON compilation database (Clang's "JSON Compilation Database Format Specification",
 * clang.llvm.org/docs/JSONCompilationDatabase.html): its two forms of a command (`arguments`, a
 * list of words; `command`, one string where '"' and '\' are the only special characters),
 * `directory` and `file` paths relative to the working directory, and what the CLI does with a
 * database: each file read with its own entry's flags, `check` with no files checking the
 * project, and bad input (not JSON, missing files, files outside the project, unreadable
 * entries) giving one message each while the rest is checked. Nothing in a database is run.
 */
import { existsSync, mkdirSync, mkdtempSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { entrySettings, parseCompileDatabase, splitCommand, standardMacros } from '../server/src/core/project/compileDb';
import { normalisePath, resolvePath } from '../server/src/core/project/paths';
import { runCli } from './helpers';

describe('the database format (JSON Compilation Database Format Specification)', () => {
  // The specification's own example entry, in both forms: after JSON unescaping the command is
  // /usr/bin/clang++ -Irelative -DSOMEDEF="With spaces, quotes and \-es." -c -o file.o file.cc
  const spec = String.raw`[
    { "directory": "/home/user/llvm/build",
      "arguments": ["/usr/bin/clang++", "-Irelative", "-DSOMEDEF=With spaces, quotes and \\-es.", "-c", "-o", "file.o", "file.cc"],
      "file": "file.cc" },
    { "directory": "/home/user/llvm/build",
      "command": "/usr/bin/clang++ -Irelative -DSOMEDEF=\"With spaces, quotes and \\-es.\" -c -o file.o file.cc",
      "file": "file2.cc" }
  ]`;

  it('reads the arguments form and the command form of the specification example to the same words', () => {
    const db = parseCompileDatabase(spec, '/home/user/llvm/build/compile_commands.json');
    expect(db.problems).toEqual([]);
    const [a, c] = db.entries;
    // The specification: "Arguments should not be escaped" (arguments) and '"' and '\' are the
    // only special characters of command; inside double quotes '\-' keeps its backslash.
    expect(c.arguments).toEqual(a.arguments);
    expect(a.defines).toEqual([['SOMEDEF', 'With spaces, quotes and \\-es.']]);
    // "All paths specified in the command or file fields must be either absolute or relative to this directory."
    expect(a.includeDirs).toEqual(['/home/user/llvm/build/relative']);
    expect(a.file).toBe('/home/user/llvm/build/file.cc');
    expect(c.file).toBe('/home/user/llvm/build/file2.cc');
  });

  it('resolves a relative directory against the database folder, and file against directory', () => {
    // The specification asks for the working directory as written; a relative one (as some
    // generators write) can only mean the database's folder (common practice of clang tools).
    const db = parseCompileDatabase(JSON.stringify([
      { directory: 'build/obj', file: '../../src/a.c', arguments: ['cc', '-I', '../../include', '-iquote', 'q', '-isystem', '/opt/s', '-idirafter', 'late', '-c', '../../src/a.c'] },
      { directory: '.', file: '/abs/b.c', command: 'cc -c /abs/b.c' },
    ]), '/p/compile_commands.json');
    expect(db.entries[0].directory).toBe('/p/build/obj');
    expect(db.entries[0].file).toBe('/p/src/a.c');
    expect(db.entries[0].includeDirs).toEqual(['/p/include', '/p/build/obj/q', '/opt/s', '/p/build/obj/late']);
    expect(db.entries[1].directory).toBe('/p');
    expect(db.entries[1].file).toBe('/abs/b.c');
  });

  it('takes -D/-U, the model flags and -std=, and ignores every other flag', () => {
    const db = parseCompileDatabase(JSON.stringify([
      { directory: '/w', file: 'k.cpp', command: `g++ -O3 -Wall -march=native -MD -MF k.d -DUSE_GPU -D NX=512 -D 'MSG="a b"' -UNDEBUG -fopenacc -std=c++14 -std=gnu++17 -o k.o -c k.cpp` },
      { directory: '/w', file: 'm.c', arguments: ['nvc', '-mp=gpu', '-acc', 'm.c'] },
      { directory: '/w', file: 'o.f90', arguments: ['gfortran', '-fopenmp', '-std=f2008', '-J', 'mods', '-c', 'o.f90'] },
    ]), '/w/compile_commands.json');
    const [k, m, o] = db.entries;
    expect(k.defines).toEqual([['USE_GPU', '1'], ['NX', '512'], ['MSG', '"a b"']]);
    expect(k.undefines).toEqual(['NDEBUG']);
    expect(k.includeDirs).toEqual([]);
    expect(k.directives).toBe('openacc');
    // The last -std= wins, as with gcc and clang.
    expect(k.std).toBe('gnu++17');
    expect(m.directives).toBe('both');
    expect(o.directives).toBe('openmp');
    expect(o.std).toBe('f2008');
  });

  it('maps -std= to the version macros the standards fix, and puts the user flags on top', () => {
    // C11 §6.10.8.1: __STDC_VERSION__ 201112L; C++17 [cpp.predefined]: __cplusplus 201703L (from memory).
    expect(standardMacros('c11').defines).toEqual([['__STDC_VERSION__', '201112L']]);
    expect(standardMacros('gnu99').defines).toEqual([['__STDC_VERSION__', '199901L']]);
    expect(standardMacros('c++14').defines).toEqual([['__cplusplus', '201402L']]);
    // C89 has no __STDC_VERSION__ (it came with the 1994 amendment).
    expect(standardMacros('c89').undefines).toEqual(['__STDC_VERSION__']);
    expect(standardMacros('c++2b')).toEqual({ defines: [], undefines: [] });
    const [e] = parseCompileDatabase(JSON.stringify([{ directory: '/w', file: 'a.c', arguments: ['cc', '-DA=1', '-DB', '-UC', '-Iinc', '-fopenacc', '-std=c11', 'a.c'] }]), '/w/compile_commands.json').entries;
    const s = entrySettings(e, { defines: new Map([['A', '2'], ['C', '1']]), undefines: ['B'], includeDirs: ['/user/inc'], directives: 'openmp' });
    expect([...s.defines!]).toEqual([['__STDC_VERSION__', '201112L'], ['A', '2'], ['B', '1'], ['C', '1']]);
    // The user's -D C beats the entry's -U C; the user's -U B applies last.
    expect(s.undefines).toEqual(['B']);
    expect(s.includeDirs).toEqual(['/w/inc', '/user/inc']);
    expect(s.directives).toBe('openmp');
  });

  it('splits a command as data: quotes and backslashes only, never expansion', () => {
    expect(splitCommand(String.raw`cc -DX="a \"b\" c" -DY=a\ b '-DZ=$(rm -rf /)' $HOME *.c`)).toEqual(['cc', '-DX=a "b" c', '-DY=a b', '-DZ=$(rm -rf /)', '$HOME', '*.c']);
    expect(splitCommand('  cc   -c  ""  x.c ')).toEqual(['cc', '-c', '', 'x.c']);
  });

  it('gives one problem per entry it cannot read, and keeps the others', () => {
    const db = parseCompileDatabase(JSON.stringify([
      { directory: '/w', file: 'ok.c', arguments: ['cc', 'ok.c'] },
      { directory: '/w', file: 'none.c' },
      { file: 'nodir.c', command: 'cc nodir.c' },
      { directory: '/w', command: 'cc x.c' },
      { directory: '/w', file: 'bad.c', arguments: 'cc bad.c' },
      { directory: '/w', file: 'empty.c', command: '   ' },
      7,
    ]), '/w/compile_commands.json');
    expect(db.entries.map((e) => e.file)).toEqual(['/w/ok.c']);
    expect(db.problems.map((p) => [p.index, p.message])).toEqual([
      [1, 'neither `arguments` nor `command` is given; entry skipped'],
      [2, 'no `directory` (a string) is given; entry skipped'],
      [3, 'no `file` (a string) is given; entry skipped'],
      [4, '`arguments` is not a list of strings; entry skipped'],
      [5, 'the command is empty; entry skipped'],
      [6, 'not a command object; entry skipped'],
    ]);
  });

  it('says when the whole file is not a database', () => {
    expect(parseCompileDatabase('[{"directory": "/w",', '/w/c.json').problems[0].message).toMatch(/^not valid JSON \(.+\); no entry is used$/);
    expect(parseCompileDatabase('{"directory": "/w"}', '/w/c.json').problems[0].message).toMatch(/top level must be an array/);
    expect(parseCompileDatabase('\uFEFF[]', '/w/c.json')).toMatchObject({ entries: [], problems: [] });
  });

  it('normalises paths without the file system', () => {
    expect(normalisePath('/a/./b/../c//d/')).toBe('/a/c/d');
    expect(normalisePath('/../x')).toBe('/x');
    expect(resolvePath('C:\\w\\build', '..\\src\\a.c')).toBe('C:/w/src/a.c');
    expect(resolvePath('/w', 'C:/abs.c')).toBe('C:/abs.c');
  });
});

/** A small project: a.c and b.c read `#ifdef FAST`; the database defines FAST for a.c only. */
function project(): string {
  const dir = mkdtempSync(join(tmpdir(), 'ol-cdb-'));
  mkdirSync(join(dir, 'src'));
  mkdirSync(join(dir, 'inc'));
  writeFileSync(join(dir, 'inc', 'size.h'), '#define N 1000\n');
  const kernel = (name: string): string => `#include "size.h"
double ${name}_u[N], ${name}_v[N];
void ${name}(void) {
  for (int t = 0; t < 10; t++) {
#ifdef FAST
#pragma acc parallel loop copy(${name}_u, ${name}_v)
#endif
    for (int i = 1; i < N - 1; i++) ${name}_v[i] = ${name}_u[i - 1] + ${name}_u[i + 1];
    for (int i = 1; i < N - 1; i++) ${name}_u[i] = ${name}_v[i];
  }
}
`;
  writeFileSync(join(dir, 'src', 'a.c'), kernel('a'));
  writeFileSync(join(dir, 'src', 'b.c'), kernel('b'));
  return dir;
}

interface JsonFile { path: string; loops: { line: number; offloaded: boolean; iterations: { value: number | null } }[]; findings: { code: string }[] }
const json = (stdout: string): JsonFile[] => JSON.parse(stdout).files;

describe('offload-ledger check with a compilation database', () => {
  it('reads each file with its own entry, and checks the project when no file is given', () => {
    const dir = project();
    writeFileSync(join(dir, 'compile_commands.json'), JSON.stringify([
      { directory: dir, file: 'src/a.c', arguments: ['cc', '-DFAST', '-Iinc', '-fopenacc', '-c', 'src/a.c'] },
      { directory: dir, file: 'src/b.c', command: 'cc -I inc -c src/b.c' },
    ]));
    const r = runCli(['check', '--format', 'json'], dir);
    expect(r.stderr).toBe('');
    const files = json(r.stdout);
    expect(files.map((f) => f.path)).toEqual(['src/a.c', 'src/b.c']);
    // Both read N = 1000 from inc/size.h through the entry's -I: 998 interior points (hand count).
    expect(files.map((f) => f.loops[0].iterations.value)).toEqual([998, 998]);
    // FAST is a.c's flag only: its loop is offloaded, b.c's is not.
    expect(files.map((f) => f.loops[0].offloaded)).toEqual([true, false]);
    expect(files[1].findings.map((f) => f.code)).toEqual(['inactive-offload-branch']);
  });

  it('finds the database in ./build, upward from a file, and where --compile-commands says', () => {
    const dir = project();
    mkdirSync(join(dir, 'build'));
    const entries = [{ directory: join(dir, 'build'), file: '../src/a.c', arguments: ['cc', '-DFAST', '-I../inc', '-c', '../src/a.c'] }];
    writeFileSync(join(dir, 'build', 'compile_commands.json'), JSON.stringify(entries));
    expect(json(runCli(['check', '--format', 'json'], dir).stdout)[0].loops[0].offloaded).toBe(true);
    // A file given from another folder: the database is found upward from the file.
    expect(json(runCli(['check', '--format', 'json', join(dir, 'src', 'a.c')]).stdout)[0].loops[0]).toMatchObject({ offloaded: true, iterations: { value: 998 } });
    const elsewhere = join(dir, 'elsewhere.json');
    writeFileSync(elsewhere, JSON.stringify([{ ...entries[0], arguments: ['cc', '-I../inc', '-c', '../src/a.c'] }]));
    expect(json(runCli(['check', '--format', 'json', '--compile-commands', elsewhere, 'src/a.c'], dir).stdout)[0].loops[0].offloaded).toBe(false);
  });

  it('port reads the file\'s entry too: a time loop behind the entry\'s -D is ported, and sizes come through its -I', () => {
    const dir = mkdtempSync(join(tmpdir(), 'ol-cdb-port-'));
    mkdirSync(join(dir, 'inc'));
    writeFileSync(join(dir, 'inc', 'grid.h'), '#define NX 400\n#define STEPS 100\n');
    // A serial code whose stepping is compiled only with -DWITH_STEPPING (a build option).
    writeFileSync(join(dir, 'heat.c'), `#include <stdio.h>
#include <stdlib.h>
#include "grid.h"
int main(void)
{
  double *u = calloc(NX, sizeof *u), *v = calloc(NX, sizeof *v);
  u[NX / 2] = 1.0;
#ifdef WITH_STEPPING
  for (int t = 0; t < STEPS; t++) {
    for (int i = 1; i < NX - 1; i++)
      v[i] = u[i] + 0.25 * (u[i - 1] - 2.0 * u[i] + u[i + 1]);
    double *s = u; u = v; v = s;
  }
#endif
  printf("%f\\n", u[NX / 2]);
  free(u); free(v);
  return 0;
}
`);
    const without = runCli(['port', 'heat.c'], dir);
    expect(without.status).toBe(2);
    expect(without.stderr).toMatch(/nothing to port: it has no time loop/);
    writeFileSync(join(dir, 'compile_commands.json'), JSON.stringify([{ directory: dir, file: 'heat.c', arguments: ['cc', '-DWITH_STEPPING', '-Iinc', '-c', 'heat.c'] }]));
    const r = runCli(['port', 'heat.c'], dir);
    expect(r.status).toBe(0);
    expect(r.stdout).toMatch(/^\+\s*#pragma acc data copy/m);
    expect(r.stdout).toMatch(/^\+\s*#pragma acc parallel loop/m);
    // NX from inc/grid.h through the entry's -I: the data clauses name the whole arrays.
    expect(r.stdout).toMatch(/u\[0:NX\]/);
  });

  it('says when there is neither a file nor a database', () => {
    const dir = mkdtempSync(join(tmpdir(), 'ol-cdb-none-'));
    const r = runCli(['check'], dir);
    expect(r.status).toBe(2);
    expect(r.stderr.trim().split('\n')).toEqual(['offload-ledger: `check` needs at least one file or directory, or a compile_commands.json in this folder or in ./build']);
    const m = runCli(['check', '--compile-commands', join(dir, 'nope.json')], dir);
    expect(m.status).toBe(2);
    expect(m.stderr).toMatch(/nope\.json: no such compilation database/);
  });
});

describe('bad input in a database: one message each, the rest checked', () => {
  it('a database that is not JSON: one line; with files given they are checked without it', () => {
    const dir = project();
    writeFileSync(join(dir, 'compile_commands.json'), '[{"directory": ');
    const withFiles = runCli(['check', '--format', 'json', 'src'], dir);
    expect(withFiles.status).toBe(0);
    expect(withFiles.stderr.trim().split('\n')).toHaveLength(1);
    expect(withFiles.stderr).toMatch(/^offload-ledger: compile_commands\.json: not valid JSON \(.+\); no entry is used$/m);
    expect(json(withFiles.stdout)).toHaveLength(2);
    // With nothing else to check, the run ends with that one message (exit status 2: input error).
    const alone = runCli(['check'], dir);
    expect(alone.status).toBe(2);
    expect(alone.stderr.trim().split('\n')).toHaveLength(1);
    expect(alone.stderr).toMatch(/not valid JSON/);
  });

  it('missing files, files outside the project and unreadable entries: one line each, the rest checked', () => {
    const dir = project();
    const outside = mkdtempSync(join(tmpdir(), 'ol-cdb-out-'));
    writeFileSync(join(outside, 'far.c'), 'int far(void) { return 0; }\n');
    writeFileSync(join(dir, 'compile_commands.json'), JSON.stringify([
      { directory: dir, file: 'src/a.c', arguments: ['cc', '-DFAST', '-Iinc', 'src/a.c'] },
      { directory: dir, file: 'src/gone.c', arguments: ['cc', 'src/gone.c'] },
      { directory: dir, file: join(outside, 'far.c'), arguments: ['cc', 'far.c'] },
      { directory: dir, file: 'src/b.c' },
      { directory: dir, file: 'notes.txt', arguments: ['cc', 'notes.txt'] },
    ]));
    const r = runCli(['check', '--format', 'json'], dir);
    expect(r.status).toBe(0);
    const lines = r.stderr.trim().split('\n');
    expect(lines).toEqual([
      'offload-ledger: compile_commands.json, entry 4 (src/b.c): neither `arguments` nor `command` is given; entry skipped',
      'offload-ledger: compile_commands.json, entry 2 (src/gone.c): the file does not exist; entry skipped',
      `offload-ledger: compile_commands.json, entry 3 (${join(outside, 'far.c')}): outside the project folder ${dir}; entry skipped`,
    ]);
    expect(json(r.stdout).map((f) => f.path)).toEqual(['src/a.c']);
  });

  it('never runs anything the database holds', () => {
    const dir = project();
    const marker = join(dir, 'ran');
    writeFileSync(join(dir, 'compile_commands.json'), JSON.stringify([
      { directory: dir, file: 'src/a.c', command: `sh -c "touch ${marker}"; touch ${marker}; cc $(touch ${marker}) \`touch ${marker}\` -Iinc @${marker} src/a.c` },
      { directory: dir, file: 'src/b.c', arguments: ['sh', '-c', `touch ${marker}`, 'src/b.c'] },
    ]));
    const r = runCli(['check', '--format', 'json'], dir);
    expect(r.status).toBe(0);
    expect(existsSync(marker)).toBe(false);
    expect(json(r.stdout).map((f) => f.path)).toEqual(['src/a.c', 'src/b.c']);
  });

  it('a source that cannot be read (binary) is skipped with one line; a file built twice is checked once, with its first entry', () => {
    const dir = project();
    writeFileSync(join(dir, 'src', 'blob.c'), Buffer.from([0x7f, 0x45, 0x4c, 0x46, 0, 1, 2]));
    writeFileSync(join(dir, 'compile_commands.json'), JSON.stringify([
      { directory: dir, file: 'src/a.c', arguments: ['cc', '-DFAST', '-Iinc', 'src/a.c'] },
      { directory: dir, file: 'src/a.c', arguments: ['cc', '-Iinc', '-o', 'a-slow.o', 'src/a.c'] },
      { directory: dir, file: 'src/blob.c', arguments: ['cc', 'src/blob.c'] },
    ]));
    const r = runCli(['check', '--format', 'json'], dir);
    expect(r.status).toBe(0);
    expect(r.stderr.trim().split('\n')).toEqual(['offload-ledger: src/blob.c: binary file, not source text; skipped']);
    const files = json(r.stdout);
    expect(files.map((f) => f.path)).toEqual(['src/a.c']);
    expect(files[0].loops[0].offloaded).toBe(true);
  });

  it('a database found on the way up that cannot be read: one line, the files are checked without it', () => {
    const dir = project();
    // A folder where the file should be: found, but not readable as a file.
    mkdirSync(join(dir, 'compile_commands.json'));
    const r = runCli(['check', '--format', 'json', 'src'], dir);
    expect(r.status).toBe(0);
    expect(r.stderr.trim().split('\n')).toHaveLength(1);
    expect(r.stderr).toMatch(/compile_commands\.json: no such compilation database/);
    expect(json(r.stdout).map((f) => f.loops[0].offloaded)).toEqual([false, false]);
  });

  it('the parser never throws, whatever the file holds (property test)', () => {
    const entry = fc.record({
      directory: fc.oneof(fc.string(), fc.constant('/w'), fc.constant('rel/dir'), fc.integer()),
      file: fc.oneof(fc.string(), fc.constant('a.c'), fc.constant('../../x.cpp')),
      arguments: fc.oneof(fc.array(fc.string()), fc.array(fc.jsonValue()), fc.string()),
      command: fc.oneof(fc.string(), fc.constant('cc "-DX=\\"unterminated -I'), fc.constant("cc '-Iq")),
    }, { requiredKeys: [] });
    fc.assert(fc.property(fc.oneof(fc.jsonValue(), fc.array(fc.oneof(entry, fc.jsonValue()))), (value) => {
      const db = parseCompileDatabase(JSON.stringify(value) ?? 'null', '/w/compile_commands.json');
      // Absolute: POSIX, or a Windows drive when the directory names one (`A:/`, found by the property once in ~7,000 runs).
      const absolute = (p: string): boolean => /^(\/|[A-Za-z]:[\\/])/.test(p);
      for (const e of db.entries) {
        expect(absolute(e.file)).toBe(true);
        for (const d of e.includeDirs) expect(absolute(d)).toBe(true);
      }
      // Every element is either an entry or a problem; a non-array is one problem.
      if (Array.isArray(value)) expect(db.entries.length + db.problems.length).toBe(value.length);
      else expect(db.problems).toHaveLength(1);
    }), { numRuns: 300 });
    fc.assert(fc.property(fc.string(), (text) => {
      expect(() => parseCompileDatabase(text, '/w/compile_commands.json')).not.toThrow();
      expect(() => splitCommand(text)).not.toThrow();
    }), { numRuns: 300 });
  });
});
