/**
 * A whole project as users have it: a CMake build (our own sources, written here) with a C++
 * time loop in src/, kernels in src/kernels/, the grid sizes in include/, and one kernel whose
 * directive is under `#ifdef USE_GPU`. CMake writes compile_commands.json
 * (CMAKE_EXPORT_COMPILE_COMMANDS, CMake documentation); the ledger read through it must equal
 * the ledger with the same flags given by hand, must change when USE_GPU is switched off, and the
 * programs must build with the CMake build and run. Skips, saying why, without cmake or g++.
 */
import { spawnSync } from 'node:child_process';
import { mkdirSync, mkdtempSync, readFileSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { runCli } from './helpers';

const have = (cmd: string): boolean => spawnSync(cmd, ['--version']).status === 0;
const tools = have('cmake') && have('g++');
if (!tools) console.log('cmake-project: skipped (needs cmake and g++ on the PATH)');

const FILES: Record<string, string> = {
  'CMakeLists.txt': `cmake_minimum_required(VERSION 3.16)
project(plate LANGUAGES CXX)
option(USE_GPU "Offload the boundary kernel with OpenACC" ON)
set(CMAKE_CXX_STANDARD 17)
set(CMAKE_CXX_EXTENSIONS OFF)
add_executable(plate src/main.cpp src/kernels/diffuse.cpp src/kernels/boundary.cpp)
target_include_directories(plate PRIVATE include)
# gcc without an offload target runs OpenACC regions on the host, so both builds run here.
target_compile_options(plate PRIVATE -fopenacc)
target_link_options(plate PRIVATE -fopenacc)
if(USE_GPU)
  target_compile_definitions(plate PRIVATE USE_GPU)
endif()
`,
  'include/grid.h': `#pragma once
#define NX 512
#define NY 256
#define AT(i, j) ((j) * NX + (i))
`,
  'include/kernels.h': `#pragma once
void diffuse(double *out, const double *in, double k);
void boundary(double *u);
`,
  'src/kernels/diffuse.cpp': `#include "grid.h"
#include "kernels.h"

void diffuse(double *out, const double *in, double k) {
#pragma acc parallel loop collapse(2) copyin(in[0:NX*NY]) copy(out[0:NX*NY])
  for (int j = 1; j < NY - 1; j++)
    for (int i = 1; i < NX - 1; i++)
      out[AT(i, j)] = in[AT(i, j)] + k * (in[AT(i - 1, j)] + in[AT(i + 1, j)] + in[AT(i, j - 1)] + in[AT(i, j + 1)] - 4.0 * in[AT(i, j)]);
}
`,
  'src/kernels/boundary.cpp': `#include "grid.h"
#include "kernels.h"

// Fixed temperatures on the left and right edges.
void boundary(double *u) {
#ifdef USE_GPU
#pragma acc parallel loop copy(u[0:NX*NY])
#endif
  for (int j = 0; j < NY; j++) {
    u[AT(0, j)] = 1.0;
    u[AT(NX - 1, j)] = 0.0;
  }
}
`,
  'src/main.cpp': `#include <cstdio>
#include <cstdlib>
#include <utility>
#include "grid.h"
#include "kernels.h"

int main(int argc, char **argv) {
  int steps = argc > 1 ? std::atoi(argv[1]) : 200;
  double *u = new double[NX * NY];
  double *un = new double[NX * NY];
  for (int k = 0; k < NX * NY; k++) { u[k] = 0.0; un[k] = 0.0; }
  for (int t = 0; t < steps; t++) {
    boundary(u);
    diffuse(un, u, 0.2);
    std::swap(u, un);
  }
  double sum = 0.0;
  for (int k = 0; k < NX * NY; k++) sum += u[k];
  std::printf("%.6f\\n", sum);
  delete[] u;
  delete[] un;
  return 0;
}
`,
};

interface Report {
  files: {
    path: string;
    loops: { line: number; offloaded: boolean; iterations: { value: number | null }; assumptions?: string[] }[];
    timeLoops: { line: number; steps: { value: number | null }; perStep: { toDevice: { value: number }; toHost: { value: number } } }[];
    findings: { code: string; line: number; message: string }[];
  }[];
}

describe.skipIf(!tools)('a CMake project read through compile_commands.json', () => {
  let dir: string;
  const sh = (cmd: string, args: string[]): string => {
    const r = spawnSync(cmd, args, { cwd: dir, encoding: 'utf8' });
    expect(r.status, `${cmd} ${args.join(' ')}: ${r.stderr}`).toBe(0);
    return r.stdout;
  };
  const run = (cwd: string, args: string[]): Report => {
    const r = runCli(['check', '--format', 'json', ...args], cwd);
    expect(r.stderr).toBe('');
    return JSON.parse(r.stdout);
  };
  /** In the project: its database applies (found in ./build, or named). */
  const check = (...args: string[]): Report => run(dir, args);
  /** The same sources in a folder with no database: only the flags given count. */
  let plain: string;
  const byHand = (...args: string[]): Report => run(plain, args);

  beforeAll(() => {
    dir = mkdtempSync(join(tmpdir(), 'ol-cmake-'));
    plain = mkdtempSync(join(tmpdir(), 'ol-cmake-plain-'));
    for (const [name, text] of Object.entries(FILES)) {
      for (const root of [dir, plain]) {
        mkdirSync(join(root, name, '..'), { recursive: true });
        writeFileSync(join(root, name), text);
      }
    }
    sh('cmake', ['-S', '.', '-B', 'build', '-DCMAKE_EXPORT_COMPILE_COMMANDS=ON', '-DUSE_GPU=ON']);
    sh('cmake', ['-S', '.', '-B', 'build-cpu', '-DCMAKE_EXPORT_COMPILE_COMMANDS=ON', '-DUSE_GPU=OFF']);
  });

  it('CMake wrote a database with each file and its flags', () => {
    const db = JSON.parse(readFileSync(join(dir, 'build', 'compile_commands.json'), 'utf8')) as { file: string; command?: string; arguments?: string[] }[];
    expect(db.map((e) => e.file.slice(dir.length + 1)).sort()).toEqual(['src/kernels/boundary.cpp', 'src/kernels/diffuse.cpp', 'src/main.cpp']);
    for (const e of db) expect(e.command ?? e.arguments!.join(' ')).toMatch(/-DUSE_GPU .*-I\S*include .*-fopenacc/);
  });

  it('the ledger through the database equals the ledger with the same flags by hand', () => {
    // `check` with no files: the project's files from ./build/compile_commands.json.
    const viaDb = check();
    const hand = byHand('-D', 'USE_GPU', '-I', 'include', '--directives', 'openacc', 'src');
    expect(viaDb).toEqual(hand);
    expect(viaDb.files.map((f) => f.path)).toEqual(['src/kernels/boundary.cpp', 'src/kernels/diffuse.cpp', 'src/main.cpp']);
    const main = viaDb.files.find((f) => f.path === 'src/main.cpp')!;
    // Through the database the time loop follows its calls into src/kernels/ (another folder):
    // copyin(in) 1 MiB + copy(out) 1 MiB + boundary's copy(u) 1 MiB to the device, copy(out) and
    // copy(u) back: 512 * 256 doubles = 1 MiB each (hand count).
    const tl = main.timeLoops[0];
    expect(tl.perStep.toDevice.value).toBe(3 * 1048576);
    expect(tl.perStep.toHost.value).toBe(2 * 1048576);
    // The number of steps comes from argv with a literal default: 200, and the report says so.
    expect(tl.steps.value).toBe(200);
    expect(main.loops[0].assumptions).toEqual(['assuming steps = 200, the default when no argument is given (line 8); another value: --bind steps=VALUE']);
    expect(main.findings.filter((f) => f.code === 'unknown-extent')).toEqual([]);
    expect(main.findings.filter((f) => f.code === 'transfer-in-time-loop').map((f) => f.line).sort()).toEqual([13, 14, 14]);
  });

  it('without -I include the sizes stay symbolic: the database is what binds them', () => {
    const bare = byHand('--directives', 'openacc', '-D', 'USE_GPU', 'src');
    const diffuse = bare.files.find((f) => f.path === 'src/kernels/diffuse.cpp')!;
    expect(diffuse.loops[0].iterations.value).toBeNull();
    // With the database: (NY - 2) * (NX - 2) = 254 * 510 interior points (hand count).
    expect(check().files.find((f) => f.path === 'src/kernels/diffuse.cpp')!.loops[0].iterations.value).toBe(129540);
  });

  it('switching USE_GPU off in the build changes the ledger, as by hand', () => {
    const gpu = check();
    const cpu = check('--compile-commands', 'build-cpu/compile_commands.json');
    expect(cpu).toEqual(byHand('-I', 'include', '--directives', 'openacc', 'src'));
    expect(cpu).not.toEqual(gpu);
    const boundary = (r: Report) => r.files.find((f) => f.path === 'src/kernels/boundary.cpp')!;
    expect(boundary(gpu).loops[0].offloaded).toBe(true);
    expect(boundary(cpu).loops[0].offloaded).toBe(false);
    expect(boundary(cpu).findings.map((f) => f.code)).toContain('inactive-offload-branch');
    // Only diffuse moves data now: copyin(in) + copy(out) in, copy(out) back: 2 MiB and 1 MiB.
    const tl = cpu.files.find((f) => f.path === 'src/main.cpp')!.timeLoops[0];
    expect(tl.perStep.toDevice.value).toBe(2 * 1048576);
    expect(tl.perStep.toHost.value).toBe(1048576);
  });

  it('both programs build with the CMake build and run to the same result', () => {
    sh('cmake', ['--build', 'build']);
    sh('cmake', ['--build', 'build-cpu']);
    const gpu = sh(join(dir, 'build', 'plate'), []);
    const cpu = sh(join(dir, 'build-cpu', 'plate'), []);
    expect(gpu).toMatch(/^\d+\.\d{6}\n$/);
    expect(cpu).toBe(gpu);
    // A run with an argument uses it: fewer steps, less heat let in from the left edge.
    expect(Number(sh(join(dir, 'build', 'plate'), ['10']))).toBeLessThan(Number(gpu));
  });
});
