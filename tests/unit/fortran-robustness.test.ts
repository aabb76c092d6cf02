/**
 * Fortran front end: parsing never fails. Broken, half-typed, truncated and random text gives a
 * partial model (and findings where a directive is affected), never an exception. The
 * properties call the unguarded reader, so a throw inside it fails the test instead of being
 * absorbed by `buildFortranModel`'s guard.
 */
import { preprocess } from '../../server/src/core/preprocessor';
import { readFileSync, readdirSync } from 'node:fs';
import { join } from 'node:path';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { buildFortranModel } from '../../server/src/core/frontend/fortran';
import { emptyFortranModel, readFortranInto } from '../../server/src/core/frontend/fortran/reader';
import type { ProgramModel, Stmt } from '../../server/src/core/model/program';
import { walkStatements } from '../../server/src/core/model/values';
import { FIXTURE_DIR, outline } from '../fixtures/fortran/check';

const EXAMPLES = join(__dirname, '..', '..', 'examples', 'estuary');

const sources = [
  ...readdirSync(FIXTURE_DIR).filter((f) => /\.(f|f90|F90)$/.test(f)).map((f) => join(FIXTURE_DIR, f)),
  ...readdirSync(EXAMPLES).filter((f) => f.endsWith('.f90')).map((f) => join(EXAMPLES, f)),
];
const corpus = sources.map((path) => ({ path, text: readFileSync(path, 'utf8') }));

/** Reads with the unguarded reader and checks that the model is well formed. */
function readStrict(text: string, path: string): ProgramModel {
  const m = emptyFortranModel(path);
  readFortranInto(m, text, path, preprocess(text, { path, language: 'fortran' }));
  const lines = text.split('\n').length;
  const inFile = (r: Stmt['range']) => r.start.line >= 0 && r.end.line < lines + 1 && r.start.col >= 0;
  for (const p of m.procedures) {
    walkStatements(p.body, (s) => {
      if (!inFile(s.range)) throw new Error(`range outside the file: ${JSON.stringify(s.range)}`);
    });
  }
  return m;
}

describe('half-typed code', () => {
  const cases: [string, string][] = [
    ['missing end do', 'program p\n  integer :: i\n  real :: a(10)\n  do i = 1, 10\n    a(i) = 0.0\nend program p\n'],
    ['unbalanced parentheses', 'program p\n  real :: a(10\n  a(1 = (2.0\n  call s(a, (1, 2)\nend program p\n'],
    ['unknown statements', 'program p\n  frobnicate the grid\n  12345\n  = = =\nend program p\n'],
    ['truncated in a continuation', 'program p\n  real :: a(10)\n  a(1) = 1.0 + &\n'],
    ['truncated in a string', "program p\n  print *, 'unterminated\n"],
    ['stray end statements', 'end do\nend if\nelse\ncase (1)\nend select\nend\nend\n'],
    ['binary junk', '\u0000\u0001\u00ff\ufffd!$acc \u0000 (((\n\t\t&&&\n#if\n#endif\n#else'],
    ['unit inside a unit', 'subroutine a\n  do i = 1, 2\nsubroutine b\n  x = 1\nend\n'],
    ['deep nesting', `program p\n${'do i = 1, 2\n'.repeat(400)}x = 1\n${'end do\n'.repeat(400)}end\n`],
    ['deep parentheses', `program p\n  x = ${'('.repeat(3000)}1${')'.repeat(3000)}\nend\n`],
    ['long else-if chain', `program p\nif (x > 0) then\n${'else if (x > 1) then\n  y = 1\n'.repeat(2000)}end if\nend\n`],
    ['empty file', ''],
  ];

  it.each(cases)('%s gives a model without throwing', (_name, text) => {
    for (const path of ['t.f90', 't.f']) {
      const m = readStrict(text, path);
      expect(m.language).toBe('fortran');
      expect(buildFortranModel(text, path).procedures.length).toBe(m.procedures.length);
    }
  });

  it('keeps the statements before and after a missing end do', () => {
    const m = buildFortranModel(cases[0][1], 't.f90');
    expect(outline(m.procedures[0].body)).toEqual(['do i = 1, 10 (trips 10)', '  a(i) = 0.0']);
  });
});

describe('properties', () => {
  const seed = fc.constantFrom(...corpus);

  it('every truncation of every fixture and demo file reads', () => {
    fc.assert(
      fc.property(seed, fc.double({ min: 0, max: 1, noNaN: true }), ({ path, text }, cut) => {
        readStrict(text.slice(0, Math.floor(text.length * cut)), path);
      }),
      { numRuns: 300 },
    );
  });

  it('shuffled lines read', () => {
    fc.assert(
      fc.property(seed, fc.array(fc.nat(), { maxLength: 40 }), ({ path, text }, swaps) => {
        const lines = text.split('\n');
        for (let k = 0; k + 1 < swaps.length; k += 2) {
          const a = swaps[k] % lines.length;
          const b = swaps[k + 1] % lines.length;
          [lines[a], lines[b]] = [lines[b], lines[a]];
        }
        readStrict(lines.join('\n'), path);
      }),
      { numRuns: 300 },
    );
  });

  it('random deletions and insertions read', () => {
    const junk = fc.constantFrom('', '(', ')', '&', '!', '!$acc ', '!$omp end ', '\n', ';', ':', ',', '=', "'", '"', 'do ', 'end ', 'if (', '%', '#if 0\n', '\u0000', 'c', '     &');
    fc.assert(
      fc.property(seed, fc.array(fc.tuple(fc.nat(), fc.nat(8), junk), { maxLength: 12 }), ({ path, text }, edits) => {
        let t = text;
        for (const [at, del, ins] of edits) {
          const i = at % (t.length + 1);
          t = t.slice(0, i) + ins + t.slice(i + del);
        }
        readStrict(t, path);
      }),
      { numRuns: 400 },
    );
  });

  it('arbitrary strings read as free and fixed form', () => {
    fc.assert(
      fc.property(fc.string({ maxLength: 300 }), fc.constantFrom('x.f90', 'x.f', 'x.F90'), (text, path) => {
        readStrict(text, path);
      }),
      { numRuns: 500 },
    );
  });
});
