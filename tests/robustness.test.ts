/**
 * Parsing never fails (DEVELOPERS.md invariant): truncated, shuffled and randomly damaged
 * variants of the fixtures and examples always give a model and findings, never an exception
 * and never an internal error.
 */
import { readFileSync, readdirSync } from 'node:fs';
import { join } from 'node:path';
import fc from 'fast-check';
import { describe, expect, it } from 'vitest';
import { ROOT, analyzeText } from './helpers';

function cSources(dir: string): string[] {
  return readdirSync(dir, { withFileTypes: true }).flatMap((e) =>
    e.isDirectory() ? cSources(join(dir, e.name)) : /\.(c|cpp)$/.test(e.name) ? [join(dir, e.name)] : [],
  );
}

const corpus = [...cSources(join(ROOT, 'examples')), ...cSources(join(ROOT, 'tests', 'fixtures'))].map((p) => readFileSync(p, 'utf8'));

function fortranSources(dir: string): string[] {
  return readdirSync(dir, { withFileTypes: true }).flatMap((e) =>
    e.isDirectory() ? fortranSources(join(dir, e.name)) : /\.(f90|F90|f)$/.test(e.name) ? [join(dir, e.name)] : [],
  );
}
const fortran = [...fortranSources(join(ROOT, 'examples')), ...fortranSources(join(ROOT, 'tests', 'fixtures'))].map((p) => ({ path: p, text: readFileSync(p, 'utf8') }));

async function survives(text: string, path = 'fuzz.c'): Promise<void> {
  const a = await analyzeText(text, path);
  expect(a.internalErrors).toEqual([]);
  expect(Array.isArray(a.findings)).toBe(true);
  for (const f of a.findings) {
    expect(f.range.start.line).toBeGreaterThanOrEqual(0);
    expect(f.message.length).toBeGreaterThan(0);
  }
}

describe('the C front end and analyses survive damaged input', () => {
  it('has a corpus', () => expect(corpus.length).toBeGreaterThanOrEqual(8));

  it('truncated files (half-typed code)', async () => {
    await fc.assert(
      fc.asyncProperty(fc.integer({ min: 0, max: corpus.length - 1 }), fc.double({ min: 0, max: 1, noNaN: true }), async (k, cut) => {
        const t = corpus[k];
        await survives(t.slice(0, Math.floor(t.length * cut)));
      }),
      { numRuns: 60 },
    );
  });

  it('shuffled lines', async () => {
    await fc.assert(
      fc.asyncProperty(fc.integer({ min: 0, max: corpus.length - 1 }), fc.array(fc.nat(), { maxLength: 30 }), async (k, swaps) => {
        const lines = corpus[k].split('\n');
        for (let s = 0; s + 1 < swaps.length; s += 2) {
          const a = swaps[s] % lines.length;
          const b = swaps[s + 1] % lines.length;
          [lines[a], lines[b]] = [lines[b], lines[a]];
        }
        await survives(lines.join('\n'));
      }),
      { numRuns: 40 },
    );
  });

  it('random deletions and insertions of characters', async () => {
    const alphabet = fc.constantFrom('(', ')', '[', ']', '{', '}', ';', '#', '\\', '\n', ':', ',', '*', '=', 'pragma', 'acc', 'omp', 'for', 'copy(', 'a[0:', ' ');
    await fc.assert(
      fc.asyncProperty(
        fc.integer({ min: 0, max: corpus.length - 1 }),
        fc.array(fc.tuple(fc.nat(), fc.nat({ max: 5 }), alphabet), { maxLength: 25 }),
        async (k, edits) => {
          let t = corpus[k];
          for (const [pos, del, ins] of edits) {
            const p = pos % (t.length + 1);
            t = t.slice(0, p) + ins + t.slice(p + del);
          }
          await survives(t);
        },
      ),
      { numRuns: 60 },
    );
  });

  it('random text and binary-looking junk', async () => {
    await fc.assert(fc.asyncProperty(fc.string({ maxLength: 400 }), (text) => survives(text)), { numRuns: 60 });
    await fc.assert(
      fc.asyncProperty(fc.uint8Array({ maxLength: 300 }), async (bytes) => survives(Buffer.from(bytes).toString('latin1'))),
      { numRuns: 30 },
    );
  });
});

describe('the whole pipeline survives damaged Fortran', () => {
  it('has a Fortran corpus', () => expect(fortran.length).toBeGreaterThanOrEqual(10));

  it('truncated and mutated Fortran files give findings, not internal errors', async () => {
    const alphabet = fc.constantFrom('(', ')', '&', '!$acc ', '!$omp end ', '\n', ':', ',', 'do ', 'end do\n', 'call ', '=', ' ');
    await fc.assert(
      fc.asyncProperty(
        fc.integer({ min: 0, max: fortran.length - 1 }),
        fc.double({ min: 0, max: 1, noNaN: true }),
        fc.array(fc.tuple(fc.nat(), fc.nat({ max: 5 }), alphabet), { maxLength: 15 }),
        async (k, cut, edits) => {
          const { path, text } = fortran[k];
          let t = text.slice(0, Math.floor(text.length * (0.5 + cut / 2)));
          for (const [pos, del, ins] of edits) {
            const p = pos % (t.length + 1);
            t = t.slice(0, p) + ins + t.slice(p + del);
          }
          await survives(t, path);
        },
      ),
      { numRuns: 60 },
    );
  });
});
