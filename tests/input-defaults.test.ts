/**
 * Sizes read from the command line (or the environment) with a constant default: the analysis
 * takes the default and says so. Each form is also compiled with gcc and run without arguments,
 * and the value the program prints must be the value the analysis assumed (the program itself
 * is the source of each expectation).
 */
import { spawnSync } from 'node:child_process';
import { mkdtempSync, writeFileSync } from 'node:fs';
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
