/**
 * The TextMate injection grammars: generated from the directive reader's word lists, committed
 * as generated, and tokenizing directives as an editor would — with vscode-textmate and the
 * Oniguruma wasm VS Code itself uses, injected into a stand-in host grammar.
 */
import { readFileSync } from 'node:fs';
import { createRequire } from 'node:module';
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { beforeAll, describe, expect, it } from 'vitest';
import * as oniguruma from 'vscode-oniguruma';
import { INITIAL, type IGrammar, Registry, type IRawGrammar } from 'vscode-textmate';

const ROOT = join(__dirname, '..');
const require = createRequire(import.meta.url);
const pkg = JSON.parse(readFileSync(join(ROOT, 'package.json'), 'utf8'));

/** Stand-in host grammars: a comment rule only, so what is highlighted comes from the injection. */
const host = (scopeName: string, comment: string): IRawGrammar =>
  ({ scopeName, patterns: [{ match: comment, name: `comment.line.${scopeName}` }], repository: {} }) as unknown as IRawGrammar;

let registry: Registry;
beforeAll(async () => {
  const wasm = readFileSync(join(require.resolve('vscode-oniguruma'), '..', 'onig.wasm')).buffer;
  await oniguruma.loadWASM(wasm);
  const injections = new Map<string, string[]>();
  for (const g of pkg.contributes.grammars) for (const to of g.injectTo) injections.set(to, [...(injections.get(to) ?? []), g.scopeName]);
  const files = new Map<string, string>(pkg.contributes.grammars.map((g: { scopeName: string; path: string }) => [g.scopeName, join(ROOT, g.path)]));
  registry = new Registry({
    onigLib: Promise.resolve({ createOnigScanner: (p: string[]) => new oniguruma.OnigScanner(p), createOnigString: (s: string) => new oniguruma.OnigString(s) }),
    loadGrammar: async (scope) => {
      if (scope === 'source.c') return host('source.c', '//.*$');
      if (scope === 'source.fortran.free') return host('source.fortran.free', '!.*$');
      const file = files.get(scope);
      return file ? (JSON.parse(readFileSync(file, 'utf8')) as IRawGrammar) : null;
    },
    getInjections: (scope) => injections.get(scope),
  });
});

/** Token texts with their scopes, for one or more lines (the rule stack carries across lines). */
async function tokens(scope: string, lines: string[]): Promise<{ text: string; scopes: string[] }[]> {
  const g = (await registry.loadGrammar(scope)) as IGrammar;
  let stack = INITIAL;
  const out: { text: string; scopes: string[] }[] = [];
  for (const line of lines) {
    const r = g.tokenizeLine(line, stack);
    for (const t of r.tokens) out.push({ text: line.slice(t.startIndex, t.endIndex), scopes: t.scopes });
    stack = r.ruleStack;
  }
  return out;
}

const scopeOf = (ts: { text: string; scopes: string[] }[], text: string): string[] => ts.find((t) => t.text === text)?.scopes ?? [];

describe('generated grammars', () => {
  it('the committed grammar files are what scripts/grammars.mjs generates from the directive reader', async () => {
    const { grammarDocuments } = await import(pathToFileURL(join(ROOT, 'scripts', 'grammars.mjs')).href);
    for (const d of await grammarDocuments(ROOT)) {
      expect(JSON.parse(readFileSync(join(ROOT, 'grammars', d.file), 'utf8'))).toEqual(d.grammar);
    }
  });
  it('package.json contributes both grammars with scope names under the extension id', () => {
    const scopes = pkg.contributes.grammars.map((g: { scopeName: string }) => g.scopeName);
    expect(scopes).toEqual(['offload-ledger.injection.c', 'offload-ledger.injection.fortran']);
  });
});

describe('C and C++ pragmas', () => {
  it('OpenACC: sentinel, construct words, clauses, array sections (OpenACC 3.3 §2.7.1 a[start:length])', async () => {
    const ts = await tokens('source.c', ['#pragma acc parallel loop collapse(3) copyin(vx[0:N], vy[0:N]) copy(p[0:N])']);
    expect(scopeOf(ts, 'acc')).toContain('keyword.control.directive.sentinel.openacc.offload-ledger');
    expect(scopeOf(ts, 'parallel')).toContain('keyword.control.directive.openacc.offload-ledger');
    expect(scopeOf(ts, 'copyin')).toContain('support.function.clause.openacc.offload-ledger');
    expect(scopeOf(ts, 'vx')).toContain('variable.other.array.offload-ledger');
    expect(scopeOf(ts, ':')).toContain('punctuation.separator.array-section.offload-ledger');
    expect(scopeOf(ts, 'N')).toContain('meta.array-section.offload-ledger');
  });
  it('OpenMP: map types and modifiers before the colon (OpenMP 5.2 map clause)', async () => {
    const ts = await tokens('source.c', ['#pragma omp target teams distribute parallel for map(always, tofrom: p[0:n]) map(to: u[0:n])']);
    expect(scopeOf(ts, 'omp')).toContain('keyword.control.directive.sentinel.openmp.offload-ledger');
    expect(scopeOf(ts, 'teams')).toContain('keyword.control.directive.openmp.offload-ledger');
    expect(scopeOf(ts, 'map')).toContain('support.function.clause.openmp.offload-ledger');
    expect(scopeOf(ts, 'always')).toContain('keyword.other.modifier.offload-ledger');
    expect(scopeOf(ts, 'tofrom')).toContain('keyword.other.modifier.offload-ledger');
    expect(scopeOf(ts, 'p')).toContain('variable.other.array.offload-ledger');
  });
  it('a reduction operator is told from the variable list', async () => {
    const ts = await tokens('source.c', ['#pragma acc parallel loop reduction(+:sum)']);
    expect(scopeOf(ts, '+')).toContain('keyword.operator.reduction.offload-ledger');
    expect(scopeOf(ts, 'sum')).toContain('variable.other.offload-ledger');
  });
  it('a backslash continuation keeps the next line inside the directive (C11 §5.1.1.2 line splicing)', async () => {
    const ts = await tokens('source.c', ['#pragma acc data copyin(u[0:n]) \\', '    copy(v[0:n])', 'int x = 0;']);
    expect(scopeOf(ts, 'copy')).toContain('support.function.clause.openacc.offload-ledger');
    expect(ts.find((t) => t.text.includes('int x'))?.scopes.some((s) => s.includes('offload-ledger'))).toBe(false);
  });
  it('other pragmas and ordinary code are left alone', async () => {
    const ts = await tokens('source.c', ['#pragma once', 'for (int i = 0; i < n; i++) copy(a);']);
    expect(ts.every((t) => t.scopes.every((s) => !s.includes('offload-ledger')))).toBe(true);
  });
});

describe('Fortran comment directives', () => {
  it('free form !$acc with a Fortran section a(lo:hi) (OpenACC 3.3 §2.7.1), case-insensitive', async () => {
    const ts = await tokens('source.fortran.free', ['  !$ACC Parallel Loop Collapse(2) copyin(h(1:nx, 1:ny)) present(u)']);
    expect(scopeOf(ts, '$ACC')).toContain('keyword.control.directive.sentinel.openacc.offload-ledger');
    expect(scopeOf(ts, 'Parallel')).toContain('keyword.control.directive.openacc.offload-ledger');
    expect(scopeOf(ts, 'copyin')).toContain('support.function.clause.openacc.offload-ledger');
    expect(scopeOf(ts, 'h')).toContain('variable.other.array.offload-ledger');
    expect(scopeOf(ts, 'present')).toContain('support.function.clause.openacc.offload-ledger');
  });
  it('!$omp end target data and fixed-form c$omp in column 1 (OpenMP 5.2 §3.1.2 fixed-form sentinels)', async () => {
    const ts = await tokens('source.fortran.free', ['!$omp end target data']);
    expect(scopeOf(ts, 'end')).toContain('keyword.control.directive.openmp.offload-ledger');
    const fixed = await tokens('source.fortran.free', ['c$omp target update from(u)']);
    expect(scopeOf(fixed, '$omp')).toContain('keyword.control.directive.sentinel.openmp.offload-ledger');
    expect(scopeOf(fixed, 'from')).toContain('support.function.clause.openmp.offload-ledger');
  });
  it('a continuation ampersand is marked and a plain comment is not a directive', async () => {
    const ts = await tokens('source.fortran.free', ['!$acc data copyin(a) &', '!$acc& copy(b)', '! $acc is not a sentinel']);
    expect(ts.some((t) => t.scopes.includes('punctuation.separator.continuation.offload-ledger'))).toBe(true);
    expect(ts.filter((t) => t.text.includes('not a sentinel')).every((t) => t.scopes.every((s) => !s.includes('offload-ledger')))).toBe(true);
  });
});
