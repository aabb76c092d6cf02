/**
 * The editor's typing path (issue 16): an edit inside one procedure re-analyses only the part of
 * the file it touches (core/incremental.ts) and merges it into the last whole analysis. Checked
 * here against a fresh whole-file analysis of the same text, after random sequences of 200 edits
 * (seeded, so a failure repeats) on every example and fixture and on a generated file: the CLI's
 * report (findings in any order) and every part of the editor's view (diagnostics, hovers,
 * lenses, hints, quick fixes, refactors, planning) must be the same. The edits are the ones typing
 * makes: a digit, an operator, a name, a subscript, a character typed anywhere (half-typed code),
 * a line emptied or replaced by another; a few land outside procedures.
 */
import { readFileSync, readdirSync, statSync } from 'node:fs';
import { extname, join, relative } from 'node:path';
import { describe, expect, it } from 'vitest';
import { type AnalyzeDeps, type FileAnalysis, analyzeSource } from '../server/src/core/analyze';
import { type EditBase, analyzeEdit, incrementalStats } from '../server/src/core/incremental';
import { languageOfPath } from '../server/src/core/language';
import { fileReport } from '../server/src/core/report';
import { readHeader } from '../server/src/host/files';
import { editStats, forgetDocuments, runJob, type AnalysisJob } from '../server/src/lsp/analysis/job';
import { buildView } from '../server/src/lsp/view/build';
import type { DocumentView, ViewOptions } from '../server/src/lsp/view/types';
import { generateSource } from './e2e/generate';
import { ROOT, grammarsForTests } from './helpers';

const viewOptions: ViewOptions = { profileName: 'pcie4-hbm2e', baseline: 'auto', severity: {}, codeLens: true, inlayHints: true, docsHref: 'https://example.invalid/findings' };

/** A small seeded generator (the same sequence on every run). */
function random(seed: number): () => number {
  let s = seed >>> 0;
  return () => {
    s = (Math.imul(s, 1664525) + 1013904223) >>> 0;
    return s / 2 ** 32;
  };
}

const sorted = (xs: unknown[]): string[] => xs.map((x) => JSON.stringify(x)).sort();

/** What the user sees of a view, with lists in a fixed order (findings at one position may come in any order). */
function seen(v: DocumentView): Record<string, unknown> {
  const diagnostics = v.diagnostics.map((d) => JSON.stringify(d));
  return {
    diagnostics: [...diagnostics].sort(),
    hovers: Object.fromEntries(Object.entries(v.hovers).map(([line, es]) => [line, sorted(es.map((e) => ({ range: e.range, card: v.cards[e.card] })))])),
    lenses: sorted(v.lenses),
    inlayHints: sorted(v.inlayHints),
    actions: sorted(v.actions.map((a) => ({ ...a, diagnostic: diagnostics[a.diagnostic] }))),
    refactors: v.refactors,
    planning: v.planning,
    estimatesAvailable: v.estimatesAvailable,
    internalErrors: v.internalErrors,
  };
}

function compared(a: FileAnalysis, text: string): Record<string, unknown> {
  const r = fileReport(a);
  const view = buildView({ uri: 'file:///t', version: 1, text, analysis: a, userBindings: new Map(), analysisMilliseconds: 0 }, viewOptions);
  return { report: { ...r, findings: sorted(r.findings as unknown[]) }, ...seen(view) };
}

/** One typing edit that keeps the line count (most keystrokes), mostly inside a procedure. */
function typingEdit(text: string, a: FileAnalysis, rnd: () => number): string {
  const pick = <T>(xs: readonly T[]): T => xs[Math.floor(rnd() * xs.length)];
  const lines = text.split('\n');
  const procs = a.model.procedures.filter((p) => !p.origin && p.range.end.line - p.range.start.line >= 2);
  if (procs.length === 0 || rnd() < 0.05) {
    const l = Math.floor(rnd() * lines.length);
    lines[l] = lines[l].replace(/\d+/, (d) => String(Number(d) + 1));
    return lines.join('\n');
  }
  const p = pick(procs);
  const inside = (): number => p.range.start.line + 1 + Math.floor(rnd() * (p.range.end.line - p.range.start.line - 1));
  const l = inside();
  const s = lines[l];
  switch (Math.floor(rnd() * 7)) {
    case 0: lines[l] = s.replace(/\d+(\.\d+)?/, () => String(1 + Math.floor(rnd() * 9))); break;
    case 1: lines[l] = s.replace(/ [+-] /, (m) => (m === ' + ' ? ' - ' : ' + ')); break;
    case 2: lines[l] = ''; break;
    case 3: lines[l] = lines[inside()]; break;
    case 4: {
      const c = Math.floor(rnd() * (s.length + 1));
      lines[l] = s.slice(0, c) + pick([...'ab+-*;()[]{} 01=']) + s.slice(c);
      break;
    }
    case 5: {
      const names = [...new Set(lines.slice(p.range.start.line, p.range.end.line + 1).join(' ').match(/[A-Za-z_]\w*/g) ?? [])];
      const here = s.match(/[A-Za-z_]\w*/g);
      if (here && names.length > 0) lines[l] = s.replace(pick(here), pick(names));
      break;
    }
    default: lines[l] = s.replace(/\[([^\]]*)\]/, (_, x: string) => `[${x} + 1]`);
  }
  return lines.join('\n');
}

/**
 * Applies `edits` random edits, each through the typing path (or a whole analysis when it declines),
 * and compares with a fresh analysis every `every` edits and after the last. Returns how many
 * edits that changed the text the typing path took.
 */
async function replay(path: string, text: string, deps: AnalyzeDeps, seed: number, edits: number, every: number): Promise<number> {
  const language = languageOfPath(path) ?? 'c';
  const rnd = random(seed);
  let base: EditBase = { text, analysis: analyzeSource({ path, language, text }, deps) };
  let parts = 0;
  for (let k = 1; k <= edits; k++) {
    // The test runner's worker answers its own messages between edits (a long synchronous test
    // makes them time out on a loaded machine).
    if (k % 10 === 0) await new Promise((r) => setImmediate(r));
    const next = typingEdit(base.text, base.analysis, rnd);
    const input = { path, language, text: next };
    const edit = analyzeEdit(base, input, deps, {});
    if (edit && edit.procedures > 0) parts++;
    base = edit?.base ?? { text: next, analysis: analyzeSource(input, deps) };
    if (k % every === 0 || k === edits) {
      const fresh = analyzeSource(input, deps);
      expect(compared(base.analysis, next), `${path} after edit ${k} (seed ${seed})`).toEqual(compared(fresh, next));
    }
  }
  return parts;
}

function sources(dir: string): string[] {
  return readdirSync(dir).sort().flatMap((n) => {
    const p = join(dir, n);
    if (statSync(p).isDirectory()) return sources(p);
    return ['.c', '.cc', '.cpp', '.f90', '.F90'].includes(extname(n)) ? [p] : [];
  });
}

describe('an edit re-analyses only its part, with the same results as a whole analysis', () => {
  it('a generated file of independent time-loop functions: 200 edits, most by parts', async () => {
    const deps = { ...(await grammarsForTests()), readInclude: readHeader };
    const before = incrementalStats.parts;
    const parts = await replay('generated.c', generateSource(600), deps, 16, 200, 20);
    // Edits that changed nothing (a pattern that did not match) are answered with the last analysis.
    expect(incrementalStats.parts - before).toBe(parts);
    // Many edits keep the brackets and the names and land in one function of many: the typing
    // path takes them (an edit that adds or removes a name other functions use, such as `u` or
    // `nx` here, is analysed as a whole file).
    expect(parts).toBeGreaterThan(30);
  }, 120_000);

  const files = [...sources(join(ROOT, 'examples')), ...sources(join(ROOT, 'tests', 'fixtures'))];
  it('finds the examples and fixtures', () => expect(files.length).toBeGreaterThan(100));
  let total = 0;
  for (const [k, file] of files.entries()) {
    it(`${relative(ROOT, file)}: 200 edits`, async () => {
      const deps = { ...(await grammarsForTests()), readInclude: readHeader };
      total += await replay(file, readFileSync(file, 'utf8'), deps, 1000 + k, 200, 50);
    }, 60_000);
  }
  // Most fixtures are one or two procedures (the part is the file); the examples have several.
  it('the typing path took part of the edits of the examples and fixtures', () => expect(total).toBeGreaterThan(200));
});

describe('the typing path declines what it cannot take', () => {
  const text = generateSource(300);
  const lines = text.split('\n');
  const inBody = lines.findIndex((l) => l.includes('u[(ny / 2) * nx'));
  const edited = (f: (ls: string[]) => void): string => {
    const ls = [...lines];
    f(ls);
    return ls.join('\n');
  };
  const cases: [string, string, string][] = [
    ['a line added', edited((ls) => ls.splice(inBody, 0, '      u[0] = 1.0f;')), 'lines added or removed'],
    ['a size changed at file level', edited((ls) => (ls[0] = '#define NX 640')), 'a preprocessor or directive line'],
    ['a brace typed', edited((ls) => (ls[inBody] += ' {')), 'brackets, quotes or comments'],
    ['a comment opened', edited((ls) => (ls[inBody] += ' /*')), 'brackets, quotes or comments'],
    ['a clause typed into a directive', edited((ls) => (ls[ls.findIndex((l) => l.includes('#pragma acc'))] += ' async')), 'a preprocessor or directive line'],
  ];
  for (const [what, next, reason] of cases) {
    it(`${what}: the whole file is analysed (${reason})`, async () => {
      const deps = { ...(await grammarsForTests()), readInclude: readHeader };
      const base: EditBase = { text, analysis: analyzeSource({ path: 'g.c', language: 'c', text }, deps) };
      const had = incrementalStats.reasons.get(reason) ?? 0;
      expect(analyzeEdit(base, { path: 'g.c', language: 'c', text: next }, deps, {})).toBeUndefined();
      expect(incrementalStats.reasons.get(reason)).toBe(had + 1);
    });
  }
});

describe("the editor's job keeps the last analysis of a document", () => {
  it('re-analyses an edited kernel file by parts, with its caller in the workspace, and shows what a cold job shows', async () => {
    const g = await grammarsForTests();
    const dir = join(ROOT, 'tests', 'fixtures', 'workspace');
    const main = join(dir, 'main.c');
    const kernels = join(dir, 'kernels.c');
    const text = readFileSync(kernels, 'utf8');
    const job = (t: string, version: number): AnalysisJob => ({
      uri: `file://${kernels}`, version, path: kernels, language: 'c', text: t, bindings: [], baseline: 'auto', view: viewOptions, root: dir,
      neighbours: [{ path: main, language: 'c', text: readFileSync(main, 'utf8') }],
    });
    forgetDocuments();
    runJob(job(text, 1), g);
    const rnd = random(7);
    let t = text;
    const before = editStats.parts;
    for (let v = 2; v < 40; v++) {
      await new Promise((r) => setImmediate(r));
      t = typingEdit(t, analyzeSource({ path: kernels, language: 'c', text: t }, g), rnd);
      const warm = runJob(job(t, v), g);
      forgetDocuments();
      const cold = runJob(job(t, v), g);
      expect(seen(warm), `version ${v}`).toEqual(seen(cold));
    }
    expect(editStats.parts).toBeGreaterThan(before);
  }, 120_000);
});

/** A linearised array indexed 1-D in a time loop and 2-D in another function (its strides give its shape), with fillers. */
const LINEARISED = `#define NX 1000
#define NY 1000
void solve(double *u, int steps)
{
  double s = 0.0;
#pragma acc data copy(u[0:NX*NY])
  for (int t = 0; t < steps; t++) {
#pragma acc parallel loop
    for (int i = 0; i < NX * NY; i++)
      u[i] = u[i] * 0.5;
#pragma acc update host(u[0:NX*NY])
    for (int j = 0; j < NY; j++)
      s += u[j * NX];
  }
}
void zero(double *u)
{
  for (int j = 0; j < NY; j++)
    for (int i = 0; i < NX; i++)
      u[j * NX + i] = 0.0;
}
void clear(double *z)
{
  for (int i = 0; i < NX; i++)
    z[i] = 0.0;
}
void wipe(double *w)
{
  for (int i = 0; i < NX; i++)
    w[i] = 0.0;
}
`;

/**
 * Readings that span procedures (found by random edits of public mini-apps, then reduced): an edit
 * that could change how another part of the file reads is analysed as a whole file, and the
 * result equals a fresh analysis.
 */
describe('couplings between procedures decline the typing path', () => {
  const fillers = (n: number): string => Array.from({ length: n }, (_, k) => `
subroutine fill${k}()
  integer :: i
  real(8) :: z(1000)
  do i = 1, 1000
    z(i) = 2.0d0
  end do
end subroutine fill${k}
`).join('');
  const cases: { what: string; path: string; text: string; from: string; to: string; reason: string }[] = [
    {
      what: 'a name another procedure\'s data clause makes an array (Fortran)',
      path: 'clause.f90',
      text: `subroutine setup(n)
  use state
  integer :: n, j
  !$acc parallel loop present(q)
  do j = 1, n
    q(j) = 0.0d0
  end do
end subroutine setup

subroutine relax(n)
  use state
  integer :: n, j
  real(8) :: a(n), b(n)
  do j = 1, n
    a(j) = b(j)
  end do
end subroutine relax
${fillers(3)}`,
      from: '    a(j) = b(j)', to: '    a(j) = q(j)', reason: 'the edit adds or removes a name another part uses',
    },
    {
      what: 'a local keeps its initial value only while no procedure assigns its name (Fortran)',
      path: 'writes.f90',
      text: `subroutine first()
  integer :: n = 100
  integer :: i
  real(8) :: x(1000)
  do i = 1, n
    x(i) = 0.0d0
  end do
end subroutine first

subroutine second()
  integer :: k, n, i
  real(8) :: y(1000)
  k = 5
  do i = 1, 10
    y(i) = 1.0d0
  end do
end subroutine second
${fillers(2)}`,
      from: '  k = 5', to: '  n = 5', reason: 'the edit adds or removes a name another part uses',
    },
    {
      what: 'a main program\'s parameter is a file-level constant (Fortran)',
      path: 'program.f90',
      text: `program driver
  integer, parameter :: nx = 100
  integer :: i
  real(8) :: x(1000)
  do i = 1, 10
    x(i) = 0.0d0
  end do
end program driver

subroutine sweep(y)
  integer :: i
  real(8) :: y(*)
  do i = 1, nx
    y(i) = 1.0d0
  end do
end subroutine sweep
${fillers(3)}`,
      from: '  integer, parameter :: nx = 100', to: '  integer, parameter :: nx = 200', reason: 'file-level names changed',
    },
    {
      what: 'a linearised array takes its shape from the strides of a same-named array elsewhere (C)',
      path: 'strides.c',
      text: LINEARISED,
      from: '      u[j * NX + i] = 0.0;', to: '      u[i + 0 * j * NX] = 0.0;', reason: 'the part indexes its arrays with other strides',
    },
  ];
  for (const c of cases) {
    it(`${c.what}: ${c.reason}`, async () => {
      const deps = { ...(await grammarsForTests()), readInclude: readHeader };
      const language = languageOfPath(c.path)!;
      expect(c.text.includes(c.from)).toBe(true);
      const next = c.text.replace(c.from, c.to);
      const base: EditBase = { text: c.text, analysis: analyzeSource({ path: c.path, language, text: c.text }, deps) };
      const had = incrementalStats.reasons.get(c.reason) ?? 0;
      expect(analyzeEdit(base, { path: c.path, language, text: next }, deps, {})).toBeUndefined();
      expect(incrementalStats.reasons.get(c.reason)).toBe(had + 1);
    });
  }
});

describe('the cache of part analyses', () => {
  it('is keyed by what lies outside the part too: an undo after another procedure changed gives a fresh result', async () => {
    const deps = { ...(await grammarsForTests()), readInclude: readHeader };
    const path = 'undo.c';
    const t0 = LINEARISED;
    const t1 = t0.replace('u[i] * 0.5', 'u[i] * 0.25');
    const t2 = t1.replace('u[j * NX + i] = 0.0;', 'u[i] = (0.0);');
    const t3 = t2.replace('u[i] * 0.25', 'u[i] * 0.5');
    let base: EditBase = { text: t0, analysis: analyzeSource({ path, language: 'c', text: t0 }, deps) };
    const taken: boolean[] = [];
    for (const text of [t1, t2, t3]) {
      const input = { path, language: 'c' as const, text };
      const edit = analyzeEdit(base, input, deps, {});
      taken.push(!!edit);
      base = edit?.base ?? { text, analysis: analyzeSource(input, deps) };
      expect(compared(base.analysis, text)).toEqual(compared(analyzeSource(input, deps), text));
    }
    // The first and last by parts, the middle one (brackets) as a whole file.
    expect(taken).toEqual([true, false, true]);
  });
});
