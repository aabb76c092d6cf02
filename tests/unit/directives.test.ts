/**
 * Tests of the directive reader (server/src/core/directives).
 *
 * Every case names the grammar production it exercises and the specification section that
 * defines it. The productions are quoted from memory, so every citation says "(from memory)";
 * section numbers were checked against the published tables of contents where those were at
 * hand (OpenMP 5.2 chapter 3 and §4.4.3; OpenACC §2.5–§2.16 as numbered in 3.3/3.4).
 */
import fc from 'fast-check';
import { describe, expect, it, test } from 'vitest';
import {
  continuesOnNextLine,
  isDirectiveStart,
  KNOWN_DIRECTIVES,
  readDirective,
  type ReadResult,
} from '../../server/src/core/directives/reader';
import type { Clause, DirectiveFamily, Pos, Range, SectionDim, SourceLanguage, VarRef } from '../../server/src/core/types';

const acc = (section: string, production: string) => `OpenACC 3.3 §${section} (from memory): ${production}`;
const omp = (section: string, production: string) => `OpenMP 5.2 §${section} (from memory): ${production}`;

const ORIGIN: Pos = { line: 0, col: 0 };
const at = (r: Range) => `${r.start.line}:${r.start.col}-${r.end.line}:${r.end.col}`;

/** A C section prints as `a[lo:len]`, a Fortran one as `a(lo:hi,...)`, a single index without `:`. */
function showVar(v: VarRef, lang: SourceLanguage): string {
  if (v.dims.length === 0) return v.name;
  const one = (d: SectionDim, hi: string | undefined) => (d.single ? d.lower! : `${d.lower ?? ''}:${hi ?? ''}`);
  if (lang === 'fortran') return `${v.name}(${v.dims.map((d) => one(d, d.upper)).join(',')})`;
  return v.name + v.dims.map((d) => `[${one(d, d.length)}]`).join('');
}

interface Want {
  family?: DirectiveFamily;
  construct?: string;
  isEnd?: boolean;
  text?: string;
  /** Clause names in order; `alias=canonical` when they differ. */
  clauses?: string[];
  /** All variables of all clauses in order, printed by showVar. */
  vars?: string[];
  /** Findings as `L:C-L:C message-fragment`; when given, the list must match exactly. */
  errors?: string[];
  /** The text is not an OpenACC/OpenMP directive, or its construct could not be recognised. */
  noDirective?: true;
}

function check(text: string, lang: SourceLanguage, want: Want, origin: Pos = ORIGIN): ReadResult {
  const r = readDirective(text, origin, lang);
  const d = r.directive;
  if (want.noDirective) expect(d).toBeUndefined();
  else expect(d, JSON.stringify(r.findings)).toBeDefined();
  if (want.family) expect(d?.family).toBe(want.family);
  if (want.construct) expect(d?.construct).toBe(want.construct);
  if (want.isEnd !== undefined) expect(d?.isEnd).toBe(want.isEnd);
  if (want.text) expect(d?.text).toBe(want.text);
  if (want.clauses) {
    expect(d?.clauses.map((c) => (c.name === c.canonical ? c.name : `${c.name}=${c.canonical}`))).toEqual(want.clauses);
  }
  if (want.vars) expect(d?.clauses.flatMap((c) => (c.vars ?? []).map((v) => showVar(v, lang)))).toEqual(want.vars);
  const errors = want.errors ?? [];
  expect(r.findings.map((f) => `${at(f.range)} ${f.message}`), 'findings').toHaveLength(errors.length);
  errors.forEach((e, i) => {
    const [range, ...msg] = e.split(' ');
    const f = r.findings[i];
    expect(at(f.range)).toBe(range);
    expect(f.message).toContain(msg.join(' '));
    expect(f.code).toBe('directive-syntax');
    expect(f.severity).toBe('error');
  });
  return r;
}

/** The one clause named `name` of the directive (the first when several). */
function clauseOf(text: string, lang: SourceLanguage, name: string, origin: Pos = ORIGIN): Clause {
  const c = readDirective(text, origin, lang).directive?.clauses.find((x) => x.name === name);
  expect(c, `${name} in ${text}`).toBeDefined();
  return c!;
}

type Row = [spec: string, text: string, lang: SourceLanguage, want: Want];
const runRows = (rows: Row[]) =>
  test.each(rows.map((r) => [`${r[0]} — ${JSON.stringify(r[1])}`, ...r.slice(1)] as [string, string, SourceLanguage, Want]))(
    '%s',
    (_title, text, lang, want) => {
      check(text, lang, want);
    },
  );

describe('OpenACC constructs', () => {
  runRows([
    [acc('2.5.1', '#pragma acc parallel [clause-list] new-line'), '#pragma acc parallel', 'c', { family: 'openacc', construct: 'parallel', isEnd: false, clauses: [] }],
    [acc('2.5.2', '#pragma acc serial [clause-list] new-line'), '#pragma acc serial', 'c', { construct: 'serial' }],
    [acc('2.5.3', '#pragma acc kernels [clause-list] new-line'), '#pragma acc kernels', 'c', { construct: 'kernels' }],
    [acc('2.9', '#pragma acc loop [clause-list] new-line'), '#pragma acc loop', 'c', { construct: 'loop' }],
    [acc('2.11', '#pragma acc parallel loop [clause-list] new-line'), '#pragma acc parallel loop', 'c', { construct: 'parallel loop' }],
    [acc('2.11', '#pragma acc kernels loop [clause-list] new-line'), '#pragma acc kernels loop', 'c', { construct: 'kernels loop' }],
    [acc('2.11', '#pragma acc serial loop [clause-list] new-line'), '#pragma acc serial loop', 'c', { construct: 'serial loop' }],
    [acc('2.6.5', '#pragma acc data [clause-list] new-line'), '#pragma acc data copy(a)', 'c', { construct: 'data' }],
    [acc('2.6.6', '#pragma acc enter data clause-list new-line'), '#pragma acc enter data copyin(a)', 'c', { construct: 'enter data' }],
    [acc('2.6.6', '#pragma acc exit data clause-list new-line'), '#pragma acc exit data copyout(a)', 'c', { construct: 'exit data' }],
    [acc('2.8', '#pragma acc host_data clause-list new-line'), '#pragma acc host_data use_device(p)', 'c', { construct: 'host_data' }],
    [acc('2.14.4', '#pragma acc update clause-list new-line'), '#pragma acc update device(a)', 'c', { construct: 'update' }],
    [acc('2.13', '#pragma acc declare clause-list new-line'), '#pragma acc declare create(a)', 'c', { construct: 'declare' }],
    [acc('2.16.3', '#pragma acc wait [( wait-argument )] [clause-list] new-line'), '#pragma acc wait', 'c', { construct: 'wait', clauses: [] }],
    [acc('2.16.3', '#pragma acc wait [( wait-argument )] — argument kept as a first pseudo-clause'), '#pragma acc wait(1, 2) async(3)', 'c', { construct: 'wait', clauses: ['wait', 'async'] }],
    [acc('2.16.3', 'wait-argument may follow after blanks'), '#pragma acc wait (q)', 'c', { construct: 'wait', clauses: ['wait'] }],
    [acc('2.12', '#pragma acc atomic [atomic-clause] new-line'), '#pragma acc atomic', 'c', { construct: 'atomic', clauses: [] }],
    [acc('2.12', 'atomic-clause: read'), '#pragma acc atomic read', 'c', { construct: 'atomic', clauses: ['read'] }],
    [acc('2.12', 'atomic-clause: write'), '#pragma acc atomic write', 'c', { construct: 'atomic', clauses: ['write'] }],
    [acc('2.12', 'atomic-clause: update'), '#pragma acc atomic update', 'c', { construct: 'atomic', clauses: ['update'] }],
    [acc('2.12', 'atomic-clause: capture'), '#pragma acc atomic capture', 'c', { construct: 'atomic', clauses: ['capture'] }],
    [acc('2.15.1', '#pragma acc routine clause-list new-line'), '#pragma acc routine seq', 'c', { construct: 'routine', clauses: ['seq'] }],
    [acc('2.15.1', '#pragma acc routine( name ) clause-list new-line'), '#pragma acc routine(saxpy) worker', 'c', { construct: 'routine', clauses: ['routine', 'worker'] }],
    [acc('2.10', '#pragma acc cache( [readonly:] var-list ) new-line'), '#pragma acc cache(a[i-1:3])', 'c', { construct: 'cache', clauses: ['cache'], vars: ['a[i-1:3]'] }],
    [acc('2.14.1', '#pragma acc init [clause-list] new-line'), '#pragma acc init', 'c', { construct: 'init' }],
    [acc('2.14.2', '#pragma acc shutdown [clause-list] new-line'), '#pragma acc shutdown', 'c', { construct: 'shutdown' }],
    [acc('2.14.3', '#pragma acc set [clause-list] new-line'), '#pragma acc set device_num(0)', 'c', { construct: 'set' }],
    [acc('2.1', '#pragma acc directive-name — blanks allowed around # and pragma'), '  #  pragma   acc   kernels', 'c', { construct: 'kernels', text: '#  pragma   acc   kernels' }],
    [acc('2.1', '!$acc directive-name [clause-list] — Fortran free form'), '!$acc parallel', 'fortran', { construct: 'parallel' }],
    [acc('2.1', 'Fortran directives are case-insensitive'), '!$ACC Parallel Loop', 'fortran', { construct: 'parallel loop' }],
    [acc('2.1', 'C directives are case-sensitive'), '#pragma acc PARALLEL', 'c', { noDirective: true, errors: ["0:12-0:20 unknown OpenACC directive 'PARALLEL'"] }],
    [acc('2.5.1', '!$acc end parallel'), '!$acc end parallel', 'fortran', { construct: 'parallel', isEnd: true }],
    [acc('2.11', '!$acc end parallel loop'), '!$acc end parallel loop', 'fortran', { construct: 'parallel loop', isEnd: true }],
    [acc('2.11', '!$acc end kernels loop'), '!$acc end kernels loop', 'fortran', { construct: 'kernels loop', isEnd: true }],
    [acc('2.11', '!$acc end serial loop'), '!$acc end serial loop', 'fortran', { construct: 'serial loop', isEnd: true }],
    [acc('2.5.3', '!$acc end kernels'), '!$acc end kernels', 'fortran', { construct: 'kernels', isEnd: true }],
    [acc('2.5.2', '!$acc end serial'), '!$acc end serial', 'fortran', { construct: 'serial', isEnd: true }],
    [acc('2.6.5', '!$acc end data'), '!$acc end data', 'fortran', { construct: 'data', isEnd: true }],
    [acc('2.8', '!$acc end host_data'), '!$acc end host_data', 'fortran', { construct: 'host_data', isEnd: true }],
    [acc('2.12', '!$acc end atomic'), '!$ACC END ATOMIC', 'fortran', { construct: 'atomic', isEnd: true }],
  ]);
});

describe('OpenMP constructs', () => {
  runRows([
    [omp('13.8', '#pragma omp target [clause[ [,] clause] ... ] new-line'), '#pragma omp target', 'c', { family: 'openmp', construct: 'target' }],
    [omp('13.5', '#pragma omp target data clause[ [,] clause] ... new-line'), '#pragma omp target data map(u)', 'c', { construct: 'target data' }],
    [omp('13.6', '#pragma omp target enter data clause[ [,] clause] ... new-line'), '#pragma omp target enter data map(to: u)', 'c', { construct: 'target enter data' }],
    [omp('13.7', '#pragma omp target exit data clause[ [,] clause] ... new-line'), '#pragma omp target exit data map(from: u)', 'c', { construct: 'target exit data' }],
    [omp('13.9', '#pragma omp target update clause[ [,] clause] ... new-line'), '#pragma omp target update from(u)', 'c', { construct: 'target update' }],
    [omp('10.2', '#pragma omp teams [clause[ [,] clause] ... ] new-line'), '#pragma omp teams', 'c', { construct: 'teams' }],
    [omp('11.6', '#pragma omp distribute [clause[ [,] clause] ... ] new-line'), '#pragma omp distribute', 'c', { construct: 'distribute' }],
    [omp('10.1', '#pragma omp parallel [clause[ [,] clause] ... ] new-line'), '#pragma omp parallel', 'c', { construct: 'parallel' }],
    [omp('11.5', '#pragma omp for [clause[ [,] clause] ... ] new-line'), '#pragma omp for', 'c', { construct: 'for' }],
    [omp('11.5', '!$omp do [clause[ [,] clause] ... ]'), '!$omp do', 'fortran', { construct: 'do' }],
    [omp('10.4', '#pragma omp simd [clause[ [,] clause] ... ] new-line'), '#pragma omp simd', 'c', { construct: 'simd' }],
    [omp('11.7', '#pragma omp loop [clause[ [,] clause] ... ] new-line'), '#pragma omp loop', 'c', { construct: 'loop' }],
    [omp('7.8', '#pragma omp declare target new-line'), '#pragma omp declare target', 'c', { construct: 'declare target' }],
    [omp('7.8', '#pragma omp declare target (extended-list) new-line'), '#pragma omp declare target(a, b)', 'c', { construct: 'declare target', clauses: ['declare target'], vars: ['a', 'b'] }],
    [omp('7.8', '#pragma omp end declare target new-line'), '#pragma omp end declare target', 'c', { construct: 'declare target', isEnd: true }],
    [omp('7.8', '#pragma omp begin declare target [clause ...] new-line'), '#pragma omp begin declare target', 'c', { construct: 'begin declare target' }],
    [omp('7.7', '#pragma omp declare simd [(proc-name)] [clause ...] new-line'), '#pragma omp declare simd', 'c', { construct: 'declare simd' }],
    [omp('15.8.4', '#pragma omp atomic [clause[ [,] clause] ... ] new-line'), '#pragma omp atomic update', 'c', { construct: 'atomic', clauses: ['update'] }],
    [omp('15.2', '#pragma omp critical [(name) [[,] hint(hint-expression)]] new-line'), '#pragma omp critical(lock)', 'c', { construct: 'critical', clauses: ['critical'] }],
    [omp('15.3.1', '#pragma omp barrier new-line'), '#pragma omp barrier', 'c', { construct: 'barrier' }],
    [omp('11.1', '#pragma omp single [clause[ [,] clause] ... ] new-line'), '#pragma omp single', 'c', { construct: 'single' }],
    [omp('10.5', '#pragma omp masked [filter(integer-expression)] new-line'), '#pragma omp masked', 'c', { construct: 'masked' }],
    [omp('10.5.1', '#pragma omp master new-line (deprecated)'), '#pragma omp master', 'c', { construct: 'master' }],
    [omp('15.5', '#pragma omp taskwait [clause[ [,] clause] ... ] new-line'), '#pragma omp taskwait', 'c', { construct: 'taskwait' }],
    [omp('12.5', '#pragma omp task [clause[ [,] clause] ... ] new-line'), '#pragma omp task', 'c', { construct: 'task' }],
    [omp('17.4', 'combined: target teams distribute parallel for simd'), '#pragma omp target teams distribute parallel for simd', 'c', { construct: 'target teams distribute parallel for simd' }],
    [omp('17.4', 'combined: target parallel for'), '#pragma omp target parallel for', 'c', { construct: 'target parallel for' }],
    [omp('17.4', 'combined: teams distribute parallel do (Fortran)'), '!$omp teams distribute parallel do', 'fortran', { construct: 'teams distribute parallel do' }],
    [omp('17.4', 'combined: target teams loop'), '#pragma omp target teams loop', 'c', { construct: 'target teams loop' }],
    [omp('17.4', 'combined: parallel for'), '#pragma omp parallel for', 'c', { construct: 'parallel for' }],
    [omp('17.4', 'combined: parallel do (Fortran)'), '!$omp parallel do', 'fortran', { construct: 'parallel do' }],
    [omp('17.4', 'combined: target teams distribute parallel do simd (Fortran)'), '!$OMP TARGET TEAMS DISTRIBUTE PARALLEL DO SIMD', 'fortran', { construct: 'target teams distribute parallel do simd' }],
    [omp('17.4', 'combined: target teams distribute'), '#pragma omp target teams distribute', 'c', { construct: 'target teams distribute' }],
    [omp('17.4', 'composite: for simd'), '#pragma omp for simd', 'c', { construct: 'for simd' }],
    [omp('3.1.2', '!$omp end target teams distribute parallel do'), '!$omp end target teams distribute parallel do', 'fortran', { construct: 'target teams distribute parallel do', isEnd: true }],
    [omp('3.1.2', 'end directives are case-insensitive'), '!$OMP END PARALLEL DO', 'fortran', { construct: 'parallel do', isEnd: true }],
    [omp('13.5', '!$omp end target data'), '!$omp end target data', 'fortran', { construct: 'target data', isEnd: true }],
    [omp('13.8', '!$omp end target'), '!$omp end target', 'fortran', { construct: 'target', isEnd: true }],
    [omp('11.5', '!$omp end do [nowait]'), '!$omp end do nowait', 'fortran', { construct: 'do', isEnd: true, clauses: ['nowait'] }],
    [omp('11.1', '!$omp end single [end-clause ...] — copyprivate'), '!$omp end single copyprivate(x)', 'fortran', { construct: 'single', isEnd: true, vars: ['x'] }],
    [omp('15.8.4', '!$omp end atomic'), '!$omp end atomic', 'fortran', { construct: 'atomic', isEnd: true }],
    [omp('15.2', '!$omp end critical [(name)]'), '!$omp end critical', 'fortran', { construct: 'critical', isEnd: true }],
    [omp('10.2', '!$omp end teams'), '!$omp end teams', 'fortran', { construct: 'teams', isEnd: true }],
  ]);
});

describe('OpenACC clauses', () => {
  runRows([
    [acc('2.7.7', 'copy( [modifier-list:] var-list )'), '#pragma acc parallel copy(a, b)', 'c', { clauses: ['copy'], vars: ['a', 'b'] }],
    [acc('2.7.8', 'copyin( [modifier-list:] var-list )'), '#pragma acc parallel copyin(a)', 'c', { clauses: ['copyin'], vars: ['a'] }],
    [acc('2.7.9', 'copyout( [modifier-list:] var-list )'), '#pragma acc parallel copyout(a)', 'c', { clauses: ['copyout'], vars: ['a'] }],
    [acc('2.7.10', 'create( [modifier-list:] var-list )'), '#pragma acc parallel create(a)', 'c', { clauses: ['create'], vars: ['a'] }],
    [acc('2.7.6', 'present( var-list )'), '#pragma acc parallel present(a)', 'c', { clauses: ['present'], vars: ['a'] }],
    [acc('2.7.11', 'no_create( var-list )'), '#pragma acc parallel no_create(a)', 'c', { clauses: ['no_create'], vars: ['a'] }],
    [acc('2.7.12', 'delete( var-list )'), '#pragma acc exit data delete(a)', 'c', { clauses: ['delete'], vars: ['a'] }],
    [acc('2.7.5', 'deviceptr( var-list )'), '#pragma acc parallel deviceptr(p)', 'c', { clauses: ['deviceptr'], vars: ['p'] }],
    [acc('2.7.13', 'attach( var-list )'), '#pragma acc enter data attach(p)', 'c', { clauses: ['attach'], vars: ['p'] }],
    [acc('2.7.14', 'detach( var-list )'), '#pragma acc exit data detach(p)', 'c', { clauses: ['detach'], vars: ['p'] }],
    [acc('2.5.13', 'private( var-list )'), '#pragma acc parallel private(t)', 'c', { clauses: ['private'], vars: ['t'] }],
    [acc('2.5.14', 'firstprivate( var-list )'), '#pragma acc serial firstprivate(t)', 'c', { clauses: ['firstprivate'], vars: ['t'] }],
    [acc('2.5.15', 'reduction( operator : var-list )'), '#pragma acc parallel reduction(+:s)', 'c', { clauses: ['reduction'], vars: ['s'] }],
    [acc('2.9.1', 'collapse( [force:] n )'), '#pragma acc loop collapse(2)', 'c', { clauses: ['collapse'] }],
    [acc('2.9.2', 'gang [( gang-arg-list )]'), '#pragma acc loop gang gang(static:*)', 'c', { clauses: ['gang', 'gang'] }],
    [acc('2.9.3', 'worker [( [num:] int-expr )]'), '#pragma acc loop worker(4)', 'c', { clauses: ['worker'] }],
    [acc('2.9.4', 'vector [( [length:] int-expr )]'), '#pragma acc loop vector(128)', 'c', { clauses: ['vector'] }],
    [acc('2.9.5', 'seq'), '#pragma acc loop seq', 'c', { clauses: ['seq'] }],
    [acc('2.9.6', 'independent'), '#pragma acc loop independent', 'c', { clauses: ['independent'] }],
    [acc('2.9.7', 'auto'), '#pragma acc loop auto', 'c', { clauses: ['auto'] }],
    [acc('2.9.8', 'tile( size-expr-list )'), '#pragma acc loop tile(32, 4)', 'c', { clauses: ['tile'] }],
    [acc('2.16.1', 'async [( int-expr )]'), '#pragma acc parallel async async(1)', 'c', { clauses: ['async', 'async'] }],
    [acc('2.16.2', 'wait [( int-expr-list )]'), '#pragma acc parallel wait wait(1, 2)', 'c', { clauses: ['wait', 'wait'] }],
    [acc('2.5.6', 'if( condition )'), '#pragma acc parallel if(n > 100)', 'c', { clauses: ['if'] }],
    [acc('2.8.3', 'if_present'), '#pragma acc update if_present self(a)', 'c', { clauses: ['if_present', 'self'] }],
    [acc('2.5.16', 'default( none | present )'), '#pragma acc kernels default(present)', 'c', { clauses: ['default'] }],
    [acc('2.6.6', 'finalize'), '#pragma acc exit data delete(a) finalize', 'c', { clauses: ['delete', 'finalize'] }],
    [acc('2.14.4', 'self( var-list ) on update'), '#pragma acc update self(a[0:n])', 'c', { clauses: ['self'], vars: ['a[0:n]'] }],
    [acc('2.14.4', 'host( var-list )'), '#pragma acc update host(a)', 'c', { clauses: ['host'], vars: ['a'] }],
    [acc('2.14.4', 'device( var-list )'), '#pragma acc update device(a)', 'c', { clauses: ['device'], vars: ['a'] }],
    [acc('2.5.7', 'self [( condition )] on compute constructs'), '#pragma acc parallel self(on_host)', 'c', { clauses: ['self'], vars: [] }],
    [acc('2.5.10', 'num_gangs( int-expr-list )'), '#pragma acc parallel num_gangs(64)', 'c', { clauses: ['num_gangs'] }],
    [acc('2.5.11', 'num_workers( int-expr )'), '#pragma acc parallel num_workers(4)', 'c', { clauses: ['num_workers'] }],
    [acc('2.5.12', 'vector_length( int-expr )'), '#pragma acc parallel vector_length(128)', 'c', { clauses: ['vector_length'] }],
    [acc('2.4', 'device_type( device-type-list )'), '#pragma acc parallel device_type(*) num_gangs(8)', 'c', { clauses: ['device_type', 'num_gangs'] }],
    [acc('2.4', 'dtype is an alias of device_type'), '#pragma acc parallel dtype(host)', 'c', { clauses: ['dtype=device_type'] }],
    [acc('2.8.1', 'use_device( var-list )'), '#pragma acc host_data use_device(p, q)', 'c', { clauses: ['use_device'], vars: ['p', 'q'] }],
    [acc('2.13.1', 'device_resident( var-list )'), '#pragma acc declare device_resident(t)', 'c', { clauses: ['device_resident'], vars: ['t'] }],
    [acc('2.13.3', 'link( var-list )'), '#pragma acc declare link(t)', 'c', { clauses: ['link'], vars: ['t'] }],
    [acc('2.15.1', 'bind( name | string )'), '#pragma acc routine bind(f_dev) seq', 'c', { clauses: ['bind', 'seq'] }],
    [acc('2.15.1', 'nohost'), '#pragma acc routine seq nohost', 'c', { clauses: ['seq', 'nohost'] }],
    [acc('2.14.3', 'default_async( int-expr )'), '#pragma acc set default_async(2)', 'c', { clauses: ['default_async'] }],
    [acc('2.14.1', 'device_num( int-expr )'), '#pragma acc init device_num(1)', 'c', { clauses: ['device_num'] }],
    [acc('2.7.4', 'copyin( readonly: var-list )'), '#pragma acc parallel copyin(readonly: a)', 'c', { clauses: ['copyin'], vars: ['a'] }],
    [acc('2.7.4', 'copyout( zero: var-list )'), '#pragma acc parallel copyout(zero: a)', 'c', { clauses: ['copyout'], vars: ['a'] }],
    [acc('2.7.7', 'pcopy / present_or_copy are aliases of copy (from 2.x)'), '#pragma acc parallel pcopy(a) present_or_copy(b)', 'c', { clauses: ['pcopy=copy', 'present_or_copy=copy'], vars: ['a', 'b'] }],
    [acc('2.7.8', 'pcopyin / present_or_copyin are aliases of copyin'), '#pragma acc parallel pcopyin(a) present_or_copyin(b)', 'c', { clauses: ['pcopyin=copyin', 'present_or_copyin=copyin'] }],
    [acc('2.7.9', 'pcopyout / present_or_copyout are aliases of copyout'), '#pragma acc parallel pcopyout(a) present_or_copyout(b)', 'c', { clauses: ['pcopyout=copyout', 'present_or_copyout=copyout'] }],
    [acc('2.7.10', 'pcreate / present_or_create are aliases of create'), '#pragma acc parallel pcreate(a) present_or_create(b)', 'c', { clauses: ['pcreate=create', 'present_or_create=create'] }],
    [acc('2.1', 'clauses may be separated by commas'), '#pragma acc parallel loop gang, vector, copy(a)', 'c', { clauses: ['gang', 'vector', 'copy'] }],
    [acc('2.1', 'Fortran clause names are case-insensitive and reported in lower case'), '!$acc parallel loop COPYIN(A) Private(i)', 'fortran', { clauses: ['copyin', 'private'], vars: ['a', 'i'] }],
    [acc('2.4', 'clauses after device_type form a new group, so repeating num_gangs is fine'), '#pragma acc parallel num_gangs(10) device_type(host) num_gangs(1)', 'c', { clauses: ['num_gangs', 'device_type', 'num_gangs'] }],
  ]);

  it(acc('2.7.4', 'modifier-list is reported in mapModifiers'), () => {
    expect(clauseOf('#pragma acc parallel copyin(readonly: a[0:n])', 'c', 'copyin')).toMatchObject({ mapModifiers: ['readonly'], args: 'readonly: a[0:n]' });
    expect(clauseOf('#pragma acc parallel copyout(zero: c)', 'c', 'copyout')).toMatchObject({ mapModifiers: ['zero'] });
    expect(clauseOf('#pragma acc cache(readonly: a[i:3])', 'c', 'cache')).toMatchObject({ mapModifiers: ['readonly'] });
  });

  it(acc('2.9.2', 'gang( [num:]int-expr | dim:int-expr | static:size-expr ) keeps its argument as value'), () => {
    expect(clauseOf('#pragma acc loop gang(static:*)', 'c', 'gang')).toMatchObject({ args: 'static:*', value: 'static:*' });
    expect(clauseOf('#pragma acc parallel vector_length(128)', 'c', 'vector_length')).toMatchObject({ value: '128' });
    expect(clauseOf('#pragma acc loop collapse(force: 2)', 'c', 'collapse')).toMatchObject({ value: 'force: 2' });
    expect(clauseOf('#pragma acc loop collapse(N)', 'c', 'collapse')).toMatchObject({ value: 'N' });
    expect(clauseOf('!$acc loop collapse(NZ)', 'fortran', 'collapse')).toMatchObject({ value: 'nz', args: 'NZ' });
    expect(clauseOf('#pragma acc wait(1, 2)', 'c', 'wait')).toMatchObject({ canonical: 'wait', value: '1, 2' });
    expect(clauseOf('#pragma acc routine(saxpy) seq', 'c', 'routine')).toMatchObject({ value: 'saxpy' });
    expect(clauseOf('#pragma acc parallel self(on_host)', 'c', 'self')).toMatchObject({ value: 'on_host' });
  });

  test.each([
    ['+', 'c'], ['*', 'c'], ['max', 'c'], ['min', 'c'], ['&', 'c'], ['|', 'c'], ['^', 'c'], ['&&', 'c'], ['||', 'c'],
    ['+', 'fortran'], ['*', 'fortran'], ['max', 'fortran'], ['MIN', 'fortran'], ['iand', 'fortran'], ['IOR', 'fortran'],
    ['ieor', 'fortran'], ['.and.', 'fortran'], ['.OR.', 'fortran'], ['.eqv.', 'fortran'], ['.NEQV.', 'fortran'],
  ] as [string, SourceLanguage][])(`${acc('2.5.15', 'reduction operator')} %s in %s`, (op, lang) => {
    const text = lang === 'fortran' ? `!$acc parallel loop reduction(${op}:s)` : `#pragma acc parallel loop reduction(${op}:s)`;
    const c = check(text, lang, { vars: ['s'] }).directive!.clauses[0];
    expect(c.reductionOp).toBe(lang === 'fortran' ? op.toLowerCase() : op);
  });
});

describe('OpenMP clauses', () => {
  runRows([
    [omp('5.8.3', 'map([[map-type-modifier[,]] ... map-type :] locator-list)'), '#pragma omp target map(tofrom: u)', 'c', { clauses: ['map'], vars: ['u'] }],
    [omp('5.9.1', 'to([motion-modifier[,] ... :] locator-list)'), '#pragma omp target update to(a[0:n])', 'c', { clauses: ['to'], vars: ['a[0:n]'] }],
    [omp('5.9.2', 'from([motion-modifier[,] ... :] locator-list)'), '#pragma omp target update from(present: a)', 'c', { clauses: ['from'], vars: ['a'] }],
    [omp('5.8.7', 'defaultmap(implicit-behavior[:variable-category])'), '#pragma omp target defaultmap(tofrom:scalar)', 'c', { clauses: ['defaultmap'] }],
    [omp('5.4.7', 'is_device_ptr(list)'), '#pragma omp target is_device_ptr(p)', 'c', { clauses: ['is_device_ptr'], vars: ['p'] }],
    [omp('5.4.9', 'has_device_addr(list)'), '#pragma omp target has_device_addr(p)', 'c', { clauses: ['has_device_addr'], vars: ['p'] }],
    [omp('5.4.8', 'use_device_ptr(list)'), '#pragma omp target data use_device_ptr(p) map(q)', 'c', { clauses: ['use_device_ptr', 'map'] }],
    [omp('5.4.10', 'use_device_addr(list)'), '#pragma omp target data use_device_addr(q) map(q)', 'c', { clauses: ['use_device_addr', 'map'] }],
    [omp('5.4.3', 'private(list)'), '#pragma omp parallel private(t)', 'c', { clauses: ['private'], vars: ['t'] }],
    [omp('5.4.4', 'firstprivate(list)'), '#pragma omp target firstprivate(t)', 'c', { clauses: ['firstprivate'], vars: ['t'] }],
    [omp('5.4.5', 'lastprivate([lastprivate-modifier:] list)'), '#pragma omp for lastprivate(conditional: t)', 'c', { clauses: ['lastprivate'], vars: ['t'] }],
    [omp('5.4.2', 'shared(list)'), '#pragma omp parallel shared(a, b)', 'c', { clauses: ['shared'], vars: ['a', 'b'] }],
    [omp('5.5.8', 'reduction([reduction-modifier,] reduction-identifier : list)'), '#pragma omp parallel for reduction(+: s)', 'c', { clauses: ['reduction'], vars: ['s'] }],
    [omp('4.4.3', 'collapse(n)'), '#pragma omp for collapse(2)', 'c', { clauses: ['collapse'] }],
    [omp('15.6', 'nowait'), '#pragma omp target nowait', 'c', { clauses: ['nowait'] }],
    [omp('15.9.5', 'depend([depend-modifier,] dependence-type : locator-list)'), '#pragma omp task depend(in: a)', 'c', { clauses: ['depend'], vars: ['a'] }],
    [omp('3.4', 'if([directive-name-modifier :] scalar-expression)'), '#pragma omp target if(target: n > 0) if(n > 1)', 'c', { clauses: ['if', 'if'] }],
    [omp('13.2', 'device([device-modifier :] integer-expression)'), '#pragma omp target device(0)', 'c', { clauses: ['device'] }],
    [omp('10.2.1', 'num_teams(integer-expression)'), '#pragma omp teams num_teams(8)', 'c', { clauses: ['num_teams'] }],
    [omp('13.3', 'thread_limit(integer-expression)'), '#pragma omp teams thread_limit(64)', 'c', { clauses: ['thread_limit'] }],
    [omp('11.5.3', 'schedule([modifier [, modifier]:] kind[, chunk_size])'), '#pragma omp for schedule(static, 4)', 'c', { clauses: ['schedule'] }],
    [omp('11.6.1', 'dist_schedule(kind[, chunk_size])'), '#pragma omp distribute dist_schedule(static)', 'c', { clauses: ['dist_schedule'] }],
    [omp('10.1.2', 'num_threads(integer-expression)'), '#pragma omp parallel num_threads(4)', 'c', { clauses: ['num_threads'] }],
    [omp('5.4.1', 'default(data-sharing-attribute)'), '#pragma omp parallel default(none)', 'c', { clauses: ['default'] }],
    [omp('10.4.3', 'simdlen(length)'), '#pragma omp simd simdlen(8)', 'c', { clauses: ['simdlen'] }],
    [omp('10.4.2', 'safelen(length)'), '#pragma omp simd safelen(8)', 'c', { clauses: ['safelen'] }],
    [omp('5.4.6', 'linear(list[: linear-step])'), '#pragma omp simd linear(i: 2)', 'c', { clauses: ['linear'], vars: ['i'] }],
    [omp('5.11', 'aligned(list[: alignment])'), '#pragma omp simd aligned(p, q: 64)', 'c', { clauses: ['aligned'], vars: ['p', 'q'] }],
    [omp('10.3', 'order([order-modifier :] concurrent)'), '#pragma omp loop order(concurrent)', 'c', { clauses: ['order'] }],
    [omp('11.7.1', 'bind(binding)'), '#pragma omp loop bind(teams)', 'c', { clauses: ['bind'] }],
    [omp('10.1.4', 'proc_bind(affinity-policy)'), '#pragma omp parallel proc_bind(close)', 'c', { clauses: ['proc_bind'] }],
    [omp('6.6', 'allocate([allocator :] list)'), '#pragma omp parallel private(t) allocate(al: t)', 'c', { clauses: ['private', 'allocate'], vars: ['t', 't'] }],
    [omp('7.8', 'link(list) on declare target'), '#pragma omp declare target link(t)', 'c', { clauses: ['link'], vars: ['t'] }],
    [omp('7.8', 'enter(extended-list) on declare target'), '#pragma omp declare target enter(f, g)', 'c', { clauses: ['enter'], vars: ['f', 'g'] }],
    [omp('13.1', 'device_type(host | nohost | any)'), '#pragma omp declare target enter(f) device_type(nohost)', 'c', { clauses: ['enter', 'device_type'] }],
    [omp('3.2', 'clauses may be separated by commas or blanks'), '#pragma omp parallel for, private(i), shared(a)', 'c', { clauses: ['private', 'shared'] }],
    [omp('3.1.2', 'Fortran clause names are case-insensitive'), '!$OMP PARALLEL DO PRIVATE(I) SCHEDULE(STATIC)', 'fortran', { clauses: ['private', 'schedule'], vars: ['i'] }],
  ]);

  it(omp('5.8.3', 'map-type defaults to tofrom; modifiers always, close, present, mapper(id); commas optional'), () => {
    const c = (t: string) => clauseOf(`#pragma omp target ${t}`, 'c', 'map');
    expect(c('map(u)')).toMatchObject({ mapType: 'tofrom', mapModifiers: [] });
    expect(c('map(tofrom: u)')).toMatchObject({ mapType: 'tofrom', mapModifiers: [] });
    expect(c('map(always, to: a[0:n])')).toMatchObject({ mapType: 'to', mapModifiers: ['always'] });
    expect(c('map(always close present, from: a)')).toMatchObject({ mapType: 'from', mapModifiers: ['always', 'close', 'present'] });
    expect(c('map(mapper(custom), alloc: a)')).toMatchObject({ mapType: 'alloc', mapModifiers: ['mapper(custom)'] });
    expect(clauseOf('#pragma omp target exit data map(release: a)', 'c', 'map')).toMatchObject({ mapType: 'release' });
    expect(clauseOf('#pragma omp target exit data map(delete: a)', 'c', 'map')).toMatchObject({ mapType: 'delete' });
    expect(clauseOf('!$omp target map(ALWAYS, TO: A)', 'fortran', 'map')).toMatchObject({ mapType: 'to', mapModifiers: ['always'] });
  });

  it(omp('5.9.1', 'motion-modifier present: on to/from'), () => {
    expect(clauseOf('#pragma omp target update to(present: a)', 'c', 'to')).toMatchObject({ mapModifiers: ['present'] });
  });

  it(omp('5.5.8', 'reduction-modifier inscan / task precedes the identifier'), () => {
    expect(clauseOf('#pragma omp for reduction(inscan, +: s)', 'c', 'reduction')).toMatchObject({ reductionOp: '+', mapModifiers: ['inscan'] });
    expect(clauseOf('#pragma omp parallel reduction(task,+:s)', 'c', 'reduction')).toMatchObject({ reductionOp: '+', mapModifiers: ['task'] });
    expect(clauseOf('!$omp parallel do reduction(.EQV.:ok)', 'fortran', 'reduction')).toMatchObject({ reductionOp: '.eqv.' });
    expect(clauseOf('#pragma omp parallel for reduction(my_op: s)', 'c', 'reduction')).toMatchObject({ reductionOp: 'my_op' });
  });

  it(omp('3.2', 'single-expression clauses keep the trimmed argument as value'), () => {
    expect(clauseOf('#pragma omp target if(target: n > 0)', 'c', 'if')).toMatchObject({ value: 'target: n > 0' });
    expect(clauseOf('#pragma omp for schedule(static, 4)', 'c', 'schedule')).toMatchObject({ value: 'static, 4' });
    expect(clauseOf('#pragma omp target defaultmap(tofrom:scalar)', 'c', 'defaultmap')).toMatchObject({ value: 'tofrom:scalar' });
    expect(clauseOf('#pragma omp simd linear(i: 2)', 'c', 'linear')).toMatchObject({ value: '2' });
    expect(clauseOf('#pragma omp task depend(in: a)', 'c', 'depend')).toMatchObject({ value: 'in' });
    expect(clauseOf('#pragma omp parallel default( shared )', 'c', 'default')).toMatchObject({ value: 'shared', args: ' shared ' });
  });
});

describe('array sections and variable lists', () => {
  const vars = (text: string, lang: SourceLanguage) => readDirective(text, ORIGIN, lang).directive!.clauses.flatMap((c) => c.vars ?? []);

  it(acc('2.7.1', 'a[lower:length] — C array section, multi-dimensional, outermost first'), () => {
    const [v] = vars('#pragma acc data copy(a[0:N][1:M-2])', 'c');
    expect(v).toEqual({
      name: 'a',
      dims: [{ lower: '0', length: 'N' }, { lower: '1', length: 'M-2' }],
      range: { start: { line: 0, col: 22 }, end: { line: 0, col: 35 } },
      text: 'a[0:N][1:M-2]',
    });
  });

  it(acc('2.7.1', 'a[:length] — omitted lower bound is undefined (defaults to 0)'), () => {
    const [v] = vars('#pragma acc data copy(a[:n])', 'c');
    expect(v.dims).toEqual([{ length: 'n' }]);
    expect('lower' in v.dims[0]).toBe(false);
  });

  it(omp('3.2.5', '[ lower-bound : ] and [ : ] — omitted length and both omitted'), () => {
    expect(vars('#pragma omp target map(a[1:], b[:])', 'c').map((v) => v.dims)).toEqual([[{ lower: '1' }], [{}]]);
  });

  it(omp('3.2.5', 'a base-language subscript is a length-one dimension'), () => {
    expect(vars('#pragma omp target map(b[10][0:n])', 'c')[0].dims).toEqual([{ lower: '10', single: true }, { lower: '0', length: 'n' }]);
    expect(vars('#pragma acc update self(a[i])', 'c')[0].dims).toEqual([{ lower: 'i', single: true }]);
  });

  it(omp('3.2.5', '[ lower-bound : length : stride ] — stride accepted (not kept)'), () => {
    expect(vars('#pragma omp target map(a[0:n:2])', 'c')[0].dims).toEqual([{ lower: '0', length: 'n' }]);
  });

  it(acc('2.7.1', 'nested parentheses in bounds; lists split on top-level commas only'), () => {
    const got = vars('#pragma acc data copy(a[0:(N+2)*(M+2)], b[f(1, 2):g(i, j)]) copyin(c)', 'c');
    expect(got.map((v) => v.text)).toEqual(['a[0:(N+2)*(M+2)]', 'b[f(1, 2):g(i, j)]', 'c']);
    expect(got[0].dims).toEqual([{ lower: '0', length: '(N+2)*(M+2)' }]);
    expect(got[1].dims).toEqual([{ lower: 'f(1, 2)', length: 'g(i, j)' }]);
  });

  it(omp('3.2.5', 'S.c[:100], p->y[:10], (p+10)[:N] — members belong to the name'), () => {
    expect(vars('#pragma omp target map(S.c[:100], p->y[:10], (p+10)[:N], p.x)', 'c').map((v) => [v.name, v.dims.length])).toEqual([
      ['S.c', 1],
      ['p->y', 1],
      ['(p+10)', 1],
      ['p.x', 0],
    ]);
    expect(vars('#pragma acc data copy(a[i].z[0:3])', 'c')[0]).toMatchObject({ name: 'a[i].z', dims: [{ lower: '0', length: '3' }] });
  });

  it(omp('3.2.5', 'this->a[:N] and a C++ scope operator in names'), () => {
    const got = vars('#pragma omp target map(tofrom: this->a[:N], ns::b[0:n])', 'cpp');
    expect(got.map((v) => v.name)).toEqual(['this->a', 'ns::b']);
    expect(got[1].dims).toEqual([{ lower: '0', length: 'n' }]);
  });

  it(acc('2.7.1', 'Fortran a(lower:upper) — upper bound is inclusive; names lower-cased'), () => {
    const [v] = vars('!$acc data copy(A(LO:HI))', 'fortran');
    expect(v).toMatchObject({ name: 'a', dims: [{ lower: 'lo', upper: 'hi' }], text: 'A(LO:HI)' });
  });

  it(acc('2.7.1', 'Fortran a(:,2:n-1), a(:), a(i,:), bare name'), () => {
    const got = vars('!$acc data copy(a(:,2:n-1), b(:), c(i,:), d)', 'fortran');
    expect(got.map((v) => v.dims)).toEqual([
      [{}, { lower: '2', upper: 'n-1' }],
      [{}],
      [{ lower: 'i', single: true }, {}],
      [],
    ]);
  });

  it(acc('2.7.1', 'Fortran nested parentheses: a(1:size(a,1)); derived type s%u(1:n)'), () => {
    const got = vars('!$acc data copy(a(1:size(a,1)), s%u(1:n), s%v)', 'fortran');
    expect(got.map((v) => [v.name, v.dims])).toEqual([
      ['a', [{ lower: '1', upper: 'size(a,1)' }]],
      ['s%u', [{ lower: '1', upper: 'n' }]],
      ['s%v', []],
    ]);
  });

  it(omp('5.8.3', 'Fortran common block names /blk/ are list items'), () => {
    expect(vars('!$omp declare target(/blk/)', 'fortran').map((v) => v.name)).toEqual(['/blk/']);
  });

  it('every VarRef.text is exactly the source text at VarRef.range', () => {
    for (const [text, lang] of CORPUS) {
      const d = readDirective(text, { line: 3, col: 2 }, lang).directive!;
      for (const v of d.clauses.flatMap((c) => c.vars ?? [])) {
        if (v.range.start.line !== v.range.end.line) continue;
        const line = text.split('\n')[v.range.start.line - 3];
        const shift = v.range.start.line === 3 ? 2 : 0;
        expect(line.slice(v.range.start.col - shift, v.range.end.col - shift)).toBe(v.text);
      }
    }
  });
});

describe('continuations, comments and exact ranges', () => {
  it(acc('2.1', 'C: a directive continues onto the next line after a backslash'), () => {
    const r = check('#pragma acc parallel loop \\\n    copyin(b[0:n]) \\\n    present(c)', 'c', {
      construct: 'parallel loop',
      text: '#pragma acc parallel loop copyin(b[0:n]) present(c)',
      vars: ['b[0:n]', 'c'],
    });
    const d = r.directive!;
    expect(at(d.range)).toBe('0:0-2:14');
    expect(at(d.clauses[0].range)).toBe('1:4-1:18');
    expect(at(d.clauses[0].vars![0].range)).toBe('1:11-1:17');
    expect(at(d.clauses[1].vars![0].range)).toBe('2:12-2:13');
  });

  it(acc('2.1', 'positions add the origin on the first line only'), () => {
    const d = check('#pragma acc data \\\n  copy(u[0:n])', 'c', { vars: ['u[0:n]'] }, { line: 41, col: 8 }).directive!;
    expect(at(d.range)).toBe('41:8-42:14');
    expect(at(d.clauses[0].range)).toBe('42:2-42:14');
    const e = check('#pragma acc data copy(u[0:n])', 'c', {}, { line: 41, col: 8 }).directive!;
    expect(at(e.clauses[0].vars![0].range)).toBe('41:30-41:36');
  });

  it(acc('2.1', 'C: blanks after the backslash, a clause split over lines, comments'), () => {
    const d = check('#pragma acc parallel copy(a, \\  \n b) /* note */ async // tail', 'c', {
      clauses: ['copy', 'async'],
      vars: ['a', 'b'],
    }).directive!;
    expect(at(d.clauses[0].range)).toBe('0:21-1:3');
    expect(d.text).toBe('#pragma acc parallel copy(a, b)   async');
    expect(at(d.range)).toBe('0:0-1:20');
  });

  it(acc('2.1', 'C: a block comment may span lines inside the pragma'), () => {
    check('#pragma acc parallel /* a\n comment */ copy(a)', 'c', { clauses: ['copy'], vars: ['a'] });
  });

  it(omp('3.1.2', 'Fortran free form: & ends the line, !$omp& continues it'), () => {
    const d = check('!$omp target data map(tofrom: u) &\n!$omp& map(to: w)', 'fortran', {
      text: '!$omp target data map(tofrom: u) map(to: w)',
      vars: ['u', 'w'],
    }).directive!;
    expect(at(d.clauses[1].range)).toBe('1:7-1:17');
    expect(at(d.clauses[1].vars![0].range)).toBe('1:15-1:16');
  });

  it(acc('2.1', 'Fortran free form: indented sentinel, optional leading &, trailing comments'), () => {
    const d = check('    !$acc parallel loop &   ! first\n    !$acc & copy(a(1:n)) & ! second\n    !$acc private(i) ! last', 'fortran', {
      construct: 'parallel loop',
      text: '!$acc parallel loop copy(a(1:n)) private(i)',
      vars: ['a(1:n)', 'i'],
    }).directive!;
    expect(at(d.range)).toBe('0:4-2:20');
    expect(at(d.clauses[0].range)).toBe('1:12-1:24');
    expect(at(d.clauses[1].vars![0].range)).toBe('2:18-2:19');
  });

  it(acc('2.1', 'Fortran fixed form: c$acc, *$acc, !$acc in column 1; non-blank column 6 continues'), () => {
    check('c$acc parallel loop\nc$acc+ copy(a(1:n))', 'fortran', { construct: 'parallel loop', vars: ['a(1:n)'], text: 'c$acc parallel loop copy(a(1:n))' });
    check('*$omp parallel do\n*$omp&private(i)', 'fortran', { construct: 'parallel do', vars: ['i'] });
    const d = check('!$acc kernels\n!$acc1copyin(x)\n      x = 1', 'fortran', { construct: 'kernels', vars: ['x'] }).directive!;
    expect(at(d.clauses[0].range)).toBe('1:6-1:15');
    check('C$ACC0PARALLEL', 'fortran', { construct: 'parallel' });
  });

  it(acc('2.1', 'Fortran free form: a clause argument split over two lines keeps exact ranges'), () => {
    const d = check('!$acc data copy(a(1:n), &\n!$acc&   b(:,1))', 'fortran', { vars: ['a(1:n)', 'b(:,1)'], text: '!$acc data copy(a(1:n), b(:,1))' }).directive!;
    expect(at(d.clauses[0].range)).toBe('0:11-1:16');
    expect(at(d.clauses[0].vars![1].range)).toBe('1:9-1:15');
  });

  it(acc('2.1', 'CRLF line ends and tabs are blanks like any other'), () => {
    const d = check('#pragma\tacc\tparallel loop \\\r\n\tcopy(a[0:n])\r', 'c', { construct: 'parallel loop', vars: ['a[0:n]'] }).directive!;
    expect(at(d.clauses[0].range)).toBe('1:1-1:13');
    check('!$acc kernels &\r\n!$acc& copy(x)\r', 'fortran', { construct: 'kernels', vars: ['x'] });
  });

  it(acc('2.1', 'Fortran fixed form: a zero in column 6 marks an initial line'), () => {
    check('c$acc0parallel loop', 'fortran', { construct: 'parallel loop', text: 'c$acc parallel loop' });
  });

  it(acc('2.1', 'a following directive line with a blank column 6 is not a continuation'), () => {
    check('!$acc kernels\n!$acc end kernels', 'fortran', { construct: 'kernels', isEnd: false, text: '!$acc kernels' });
  });

  it(acc('2.1', 'Fortran free form: & without a continuation line is reported at the &'), () => {
    check('!$acc data copy(a) &', 'fortran', { construct: 'data', errors: ['0:19-0:20 next line is not a continuation'] });
    check('!$acc data copy(a) &\n      x = 1', 'fortran', { construct: 'data', errors: ['0:19-0:20 next line'] });
  });
});

describe('malformed directives produce findings, never exceptions', () => {
  runRows([
    [acc('2.5.1', 'unknown clause'), '#pragma acc parallel copi(a)', 'c', { errors: ["0:21-0:25 unknown OpenACC clause 'copi'"] }],
    [acc('2.5.1', 'map is not an OpenACC clause'), '#pragma acc parallel map(a)', 'c', { errors: ["0:21-0:24 unknown OpenACC clause 'map'"] }],
    [omp('13.8', 'copy is not an OpenMP clause'), '#pragma omp target copy(a)', 'c', { errors: ["0:19-0:23 unknown OpenMP clause 'copy'"] }],
    [acc('2.1', 'unknown construct'), '#pragma acc paralel loop', 'c', { noDirective: true, errors: ["0:12-0:19 unknown OpenACC directive 'paralel'"] }],
    [acc('2.6.6', 'incomplete construct name'), '!$acc enter', 'fortran', { noDirective: true, errors: ["0:6-0:11 incomplete OpenACC directive name 'enter'"] }],
    [acc('2.1', 'missing directive name'), '#pragma acc', 'c', { noDirective: true, errors: ['0:0-0:11 missing OpenACC directive name'] }],
    [acc('2.1', 'junk instead of a directive name'), '#pragma acc 42', 'c', { noDirective: true, errors: ["0:12-0:14 expected an OpenACC directive name"] }],
    [acc('2.7.1', 'unbalanced parenthesis: range from ( to the end of the directive'), '#pragma acc parallel copy(a[0:n] async', 'c', { clauses: [], errors: ["0:25-0:38 unbalanced parentheses in 'copy(...)'"] }],
    [acc('2.7.1', 'unbalanced bracket'), '#pragma acc parallel copy(a[0:n) async', 'c', { clauses: [], errors: ['0:25-0:38 unbalanced'] }],
    [acc('2.7.1', 'unbalanced parenthesis on a continuation line'), '#pragma acc parallel \\\n  copy(a[0:n]', 'c', { errors: ['1:6-1:13 unbalanced'] }],
    [acc('2.7.1', 'unbalanced parenthesis in a construct argument'), '#pragma acc cache(a[0:n]', 'c', { errors: ["0:17-0:24 unbalanced parentheses after 'cache'"] }],
    [acc('2.7.1', 'a stray closing parenthesis'), '#pragma acc parallel copy(a))', 'c', { clauses: ['copy'], errors: ["0:28-0:29 unexpected ')'"] }],
    [acc('2.7.7', 'copy without its argument'), '#pragma acc parallel copy', 'c', { clauses: ['copy'], errors: ["0:21-0:25 'copy' needs a parenthesised argument"] }],
    [acc('2.9.1', 'collapse() with an empty argument'), '#pragma acc loop collapse()', 'c', { errors: ["0:25-0:27 'collapse' needs an argument"] }],
    [acc('2.10', 'cache needs its list'), '#pragma acc cache', 'c', { construct: 'cache', errors: ["0:12-0:17 'cache' needs a parenthesised argument"] }],
    [acc('2.9.5', 'seq takes no argument'), '#pragma acc loop seq(1)', 'c', { errors: ["0:20-0:23 'seq' takes no argument"] }],
    [acc('2.5.15', 'reduction without operator:'), '#pragma acc parallel reduction(s)', 'c', { vars: ['s'], errors: ['0:30-0:33 a reduction needs an operator'] }],
    [acc('2.5.15', 'reduction with an unknown operator'), '#pragma acc parallel reduction(-:s)', 'c', { errors: ["0:31-0:32 unknown reduction operator '-'"] }],
    [acc('2.5.15', 'Fortran operators are not C operators'), '!$acc parallel reduction(&&:s)', 'fortran', { errors: ["0:25-0:27 unknown reduction operator '&&'"] }],
    [acc('2.5.15', 'reduction with a missing operator before :'), '#pragma acc parallel reduction(:s)', 'c', { errors: ["0:31-0:32 missing reduction operator"] }],
    [omp('5.5.8', 'unknown reduction modifier'), '#pragma omp for reduction(bogus, +: s)', 'c', { errors: ["0:26-0:31 unknown reduction modifier 'bogus'"] }],
    [omp('5.8.3', 'unknown map type'), '#pragma omp target map(tofro: a)', 'c', { vars: ['a'], errors: ["0:23-0:28 unknown map type 'tofro'"] }],
    [omp('5.8.3', 'a map type in a modifier position'), '#pragma omp target map(to, from: a)', 'c', { errors: ["0:23-0:25 unknown map-type modifier 'to'"] }],
    [omp('5.8.3', 'missing map type before :'), '#pragma omp target map(: a)', 'c', { errors: ["0:23-0:24 missing map type"] }],
    [acc('2.7.4', 'unknown data clause modifier'), '#pragma acc data copyin(readonlyy: a)', 'c', { vars: ['a'], errors: ["0:24-0:33 unknown modifier 'readonlyy'"] }],
    [acc('2.7.4', 'a modifier that belongs to another clause'), '#pragma acc data copy(zero: a)', 'c', { errors: ["0:22-0:26 unknown modifier 'zero'"] }],
    [acc('2.7.4', 'modifier without a list'), '#pragma acc data copyin(readonly:)', 'c', { errors: ['0:32-0:33 missing variable list'] }],
    [acc('2.5.16', 'duplicate default'), '#pragma acc parallel default(none) default(present)', 'c', { errors: ["0:35-0:42 'default' may appear only once"] }],
    [omp('5.4.1', 'duplicate default in OpenMP'), '#pragma omp parallel default(none) default(shared)', 'c', { errors: ["0:35-0:42 'default' may appear only once"] }],
    [acc('2.5.16', 'default(shared) is OpenMP, not OpenACC'), '#pragma acc parallel default(shared)', 'c', { errors: ["0:29-0:35 'default' must be one of none, present"] }],
    [omp('13.1', 'device_type(host | nohost | any)'), '#pragma omp declare target device_type(gpu)', 'c', { errors: ["0:39-0:42 'device_type' must be one of host, nohost, any"] }],
    [acc('2.14.4', 'collapse is not allowed on update'), '#pragma acc update self(a) collapse(2)', 'c', { errors: ["0:27-0:35 'collapse' is not allowed on 'update'"] }],
    [acc('2.5.3', 'reduction is not allowed on kernels'), '#pragma acc kernels reduction(+:s)', 'c', { errors: ["0:20-0:29 'reduction' is not allowed on 'kernels'"] }],
    [omp('13.9', 'map is not allowed on target update'), '#pragma omp target update map(a)', 'c', { errors: ["0:26-0:29 'map' is not allowed on 'target update'"] }],
    [omp('3.1.2', 'only nowait/copyprivate on an end directive'), '!$omp end parallel private(i)', 'fortran', { isEnd: true, errors: ["0:19-0:26 'private' is not allowed on 'end parallel'"] }],
    [omp('11.5', 'do is the Fortran spelling of for'), '#pragma omp parallel do', 'c', { construct: 'parallel do', errors: ["0:12-0:23 'parallel do' is not an OpenMP construct in C"] }],
    [omp('11.5', 'for is the C spelling of do'), '!$omp parallel for', 'fortran', { construct: 'parallel for', errors: ["0:6-0:18 'parallel for' is not an OpenMP construct in Fortran"] }],
    [acc('2.5.1', 'end directives exist only in Fortran'), '#pragma acc end parallel', 'c', { isEnd: true, errors: ["0:12-0:24 'end parallel' exists only in Fortran"] }],
    [omp('13.9', 'an executable directive has no end form'), '!$omp end target update', 'fortran', { isEnd: true, errors: ["0:6-0:23 'target update' has no end directive"] }],
    [acc('2.1', 'end without a construct'), '!$acc end', 'fortran', { noDirective: true, errors: ["0:6-0:9 'end' must be followed"] }],
    [acc('2.7.1', 'empty list item'), '#pragma acc data copy(a,,b)', 'c', { vars: ['a', 'b'], errors: ['0:24-0:25 empty item'] }],
    [acc('2.7.1', 'an expression is not a variable'), '#pragma acc data copy(1+2, b)', 'c', { vars: ['b'], errors: ["0:22-0:25 expected a variable name, found '1+2'"] }],
    [acc('2.7.1', 'text after a section'), '#pragma acc data copy(a[0:n]x)', 'c', { vars: [], errors: ["0:28-0:29 unexpected 'x' after the variable"] }],
    [acc('2.7.1', 'empty subscript'), '#pragma acc data copy(a[])', 'c', { vars: [], errors: ['0:23-0:25 empty subscript'] }],
    [acc('2.7.1', 'Fortran empty subscript'), '!$acc data copy(a(1,,2))', 'fortran', { vars: [], errors: ['0:17-0:23 empty subscript'] }],
    [acc('2.7.1', 'too many colons'), '#pragma acc data copy(a[0:1:2:3])', 'c', { vars: [], errors: ["0:23-0:32 too many ':'"] }],
    [acc('2.1', 'junk where a clause should be'), '#pragma acc parallel +++ async', 'c', { clauses: ['async'], errors: ["0:21-0:24 unexpected '+++'"] }],
  ]);

  it('text that is not an OpenACC or OpenMP directive yields nothing', () => {
    for (const [t, l] of [
      ['#pragma once', 'c'],
      ['#pragma accel parallel', 'c'],
      ['#include <x.h>', 'c'],
      ['x = 1', 'fortran'],
      ['! $acc parallel', 'fortran'],
      ['!$accel parallel', 'fortran'],
      ['c$accx', 'fortran'],
      ['', 'c'],
    ] as [string, SourceLanguage][]) {
      expect(readDirective(t, ORIGIN, l)).toEqual({ findings: [] });
    }
  });
});

describe('front-end helpers and exported tables', () => {
  it(acc('2.1', 'isDirectiveStart recognises the sentinels of both families'), () => {
    const cases: [string, SourceLanguage, DirectiveFamily | undefined][] = [
      ['#pragma acc parallel', 'c', 'openacc'],
      ['  #  pragma   omp target', 'cpp', 'openmp'],
      ['#pragma acc', 'c', 'openacc'],
      ['#pragma once', 'c', undefined],
      ['#pragma accel', 'c', undefined],
      ['!$acc parallel', 'fortran', 'openacc'],
      ['   !$OMP do', 'fortran', 'openmp'],
      ['!$acc& copy(a)', 'fortran', 'openacc'],
      ['c$acc parallel', 'fortran', 'openacc'],
      ['C$OMP+private(i)', 'fortran', 'openmp'],
      ['*$omp parallel', 'fortran', 'openmp'],
      ['   c$acc parallel', 'fortran', undefined],
      ['!$ x = 1', 'fortran', undefined],
      ['!$accel', 'fortran', undefined],
      ['#pragma acc parallel', 'fortran', undefined],
    ];
    for (const [line, lang, fam] of cases) expect(isDirectiveStart(line, lang), line).toBe(fam);
  });

  it(omp('3.1.2', 'continuesOnNextLine: C backslash, Fortran & before a comment'), () => {
    expect(continuesOnNextLine('#pragma acc parallel \\', 'c')).toBe(true);
    expect(continuesOnNextLine('#pragma acc parallel', 'c')).toBe(false);
    expect(continuesOnNextLine('!$acc parallel &  ! more', 'fortran')).toBe(true);
    expect(continuesOnNextLine('!$acc parallel ! a & in a comment', 'fortran')).toBe(false);
  });

  it('KNOWN_DIRECTIVES lists constructs and clauses of both families', () => {
    expect(KNOWN_DIRECTIVES.openacc.constructs).toEqual(expect.arrayContaining(['parallel loop', 'enter data', 'host_data', 'wait']));
    expect(KNOWN_DIRECTIVES.openacc.clauses).toEqual(expect.arrayContaining(['copyin', 'pcopy', 'present_or_create', 'dtype']));
    expect(KNOWN_DIRECTIVES.openmp.constructs).toEqual(
      expect.arrayContaining(['target teams distribute parallel for simd', 'teams distribute parallel do', 'declare target']),
    );
    expect(KNOWN_DIRECTIVES.openmp.clauses).toEqual(expect.arrayContaining(['map', 'has_device_addr', 'reduction']));
    expect(KNOWN_DIRECTIVES.openmp.constructWords).toEqual(expect.arrayContaining(['end', 'target', 'teams']));
  });
});

/** Valid directives used as seeds for the property tests and the VarRef.text check. */
const CORPUS: [string, SourceLanguage][] = [
  ['#pragma acc parallel loop collapse(2) copy(a[0:N][1:M-2]) reduction(max:err) async(1)', 'c'],
  ['#pragma acc data copyin(readonly: b[:n]) copyout(zero: c[0:(N+2)*(M+2)]) \\\n  create(t[0:n])', 'c'],
  ['#pragma acc update self(u[1:n-2]) if_present', 'c'],
  ['#pragma omp target teams distribute parallel for simd map(always, to: a[0:n]) map(tofrom: u) reduction(+: s)', 'c'],
  ['#pragma omp target update to(present: p->x[0:n]) from(S.c[:100])', 'cpp'],
  ['!$acc parallel loop gang vector_length(128) &\n!$acc& copy(a(:,2:n-1)) private(i, j) ! comment', 'fortran'],
  ['!$omp target data map(to: s%u(1:n), a(1:size(a,1)))', 'fortran'],
  ['c$acc kernels loop\nc$acc+ present(a(1:n))', 'fortran'],
  ['!$omp end target teams distribute parallel do', 'fortran'],
  ['#pragma acc wait(1) async(2)', 'c'],
  ['#pragma acc cache(a[i-1:3])', 'c'],
];

describe('property: readDirective never throws and every range lies within the text', () => {
  /** True when the file position `p` falls inside `text` placed at `origin` (end positions included). */
  function inside(p: Pos, text: string, origin: Pos): boolean {
    const lines = text.split('\n');
    const li = p.line - origin.line;
    if (li < 0 || li >= lines.length) return false;
    const col = li === 0 ? p.col - origin.col : p.col;
    return col >= 0 && col <= lines[li].length;
  }
  const ordered = (r: Range) => r.start.line < r.end.line || (r.start.line === r.end.line && r.start.col <= r.end.col);

  function checkAll(text: string, lang: SourceLanguage, origin: Pos): void {
    const r = readDirective(text, origin, lang);
    const ranges: Range[] = r.findings.map((f) => f.range);
    if (r.directive) {
      ranges.push(r.directive.range);
      for (const c of r.directive.clauses) ranges.push(c.range, ...(c.vars ?? []).map((v) => v.range));
    }
    for (const f of r.findings) expect(f.message).not.toMatch(/internal error/);
    for (const g of ranges) {
      expect(ordered(g), JSON.stringify(g)).toBe(true);
      expect(inside(g.start, text, origin) && inside(g.end, text, origin), `${JSON.stringify(g)} in ${JSON.stringify(text)}`).toBe(true);
    }
  }

  const langs = fc.constantFrom<SourceLanguage>('c', 'cpp', 'fortran');
  const origin = fc.record({ line: fc.nat(1000), col: fc.nat(80) });
  const sentinels = ['#pragma acc ', '#pragma omp ', '!$acc ', '!$omp ', 'c$acc ', '*$omp ', '#pragma acc parallel ', '!$omp target '];
  const noise = fc.string({ unit: fc.constantFrom(...'()[]{}:,&\\!/*\'" \n\tabcxyz019+-.%>'.split('')), maxLength: 80 });

  it('random strings', () => {
    fc.assert(fc.property(fc.string({ maxLength: 120 }), langs, origin, (s, l, o) => checkAll(s, l, o)), { numRuns: 500 });
  });

  it('a sentinel followed by random characters', () => {
    fc.assert(
      fc.property(fc.constantFrom(...sentinels), noise, langs, origin, (head, tail, l, o) => checkAll(head + tail, l, o)),
      { numRuns: 1500 },
    );
  });

  it('truncations and mutations of valid directives', () => {
    const seed = fc.constantFrom(...CORPUS);
    const mutated = fc
      .tuple(seed, fc.nat(), fc.nat(), fc.constantFrom('', '(', ')', '[', ']', ':', ',', '&', '\\', '\n', '!', '/*', '\n!$acc& ', ' '))
      .map(([[text, lang], cut, at, insert]) => {
        const i = at % (text.length + 1);
        const mutatedText = text.slice(0, i) + insert + text.slice(i + (insert === '' ? 1 : 0));
        return [mutatedText.slice(0, (cut % (mutatedText.length + 1)) || mutatedText.length), lang] as [string, SourceLanguage];
      });
    fc.assert(fc.property(mutated, origin, ([text, lang], o) => checkAll(text, lang, o)), { numRuns: 2000 });
  });

  it('the valid seeds read without findings', () => {
    for (const [text, lang] of CORPUS) expect(readDirective(text, ORIGIN, lang).findings, text).toEqual([]);
  });
});
