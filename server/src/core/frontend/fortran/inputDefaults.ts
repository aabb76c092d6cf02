/**
 * Sizes a Fortran program reads from its command line (or its environment) with a literal
 * default, as the C front end reads them from argv (../c/inputDefaults.ts): the default is what a
 * run without arguments uses, so the procedure binds it and says so. The forms read, in the
 * straight-line part of a procedure (each name assigned nowhere else in the file):
 *
 *   integer :: n = 4096                       (or `n = 4096` before the test)
 *   if (command_argument_count() >= 1) then    (or `nargs >= 1` with nargs = command_argument_count(),
 *     call get_command_argument(1, arg)          iargc() and `call getarg(1, arg)`, a test on the
 *     read(arg, *) n                             call's status= or length=, or len_trim(arg) > 0)
 *   end if
 *
 *   if (command_argument_count() >= 1) then; …; read(arg, *) n; else; n = 4096; end if
 *
 * and `call get_environment_variable('N', buf, status=st)` + `if (st == 0) read(buf, *) n`.
 *
 * A name with a literal value that is then read from standard input, a file or a namelist
 * (`read(*, *) n`, `read(10, nml=grid)`) stays symbolic: the value a run uses is not in the
 * source. When such a name sizes a loop or an allocation here, a finding at the read says so and
 * how to bind it. A user binding still overrides the default (analysis/bindings.ts).
 */
import * as S from '../../symbolic';
import type { Declaration, Procedure, Stmt, VExpr } from '../../model/program';
import { walkStatements } from '../../model/values';
import type { Finding } from '../../types';

export interface InputDefault {
  name: string;
  value: S.Expr;
  /** The sentence the report and the hover show. */
  note: string;
}

export interface InputReading {
  defaults: InputDefault[];
  /** Names with a literal value read again from an input the source does not hold. */
  findings: Finding[];
}

type Source = 'argument' | 'environment';

/** Intrinsic (and common extension) procedures that give a program its command line and environment. */
const ARGUMENT_READERS = new Set(['get_command_argument', 'getarg']);
const ENV_READERS = new Set(['get_environment_variable', 'getenv']);
const COUNTERS = new Set(['command_argument_count', 'iargc']);
/** Position of the value, length and status arguments of each reader (0-based), as the standard orders them. */
const POSITIONS: Record<string, { value: number; length?: number; status?: number }> = {
  get_command_argument: { value: 1, length: 2, status: 3 },
  getarg: { value: 1 },
  get_environment_variable: { value: 1, length: 2, status: 3 },
  getenv: { value: 1 },
};

/** `read (unit, …) items` / `read fmt, items`: the unit (lower-cased text) and the namelist group, if any. */
function readControl(text: string, groups: ReadonlyMap<string, readonly string[]>): { unit: string; nml?: string } | undefined {
  const m = /^\s*read\s*(\(([^)]*)\)|[^(])/i.exec(text);
  if (!m) return undefined;
  // `read *, n` and `read '(i8)', n` read standard input.
  if (m[2] === undefined) return { unit: '*' };
  const parts = m[2].split(',').map((x) => x.trim().toLowerCase());
  let unit = parts[0].replace(/^unit\s*=\s*/, '');
  const named = parts.find((x) => /^unit\s*=/.test(x));
  if (named) unit = named.replace(/^unit\s*=\s*/, '');
  // `read(10, nml=grid)`, or `read(10, grid)` when `grid` is a namelist group (not a format variable).
  const nml = parts.find((x) => /^nml\s*=/.test(x))?.replace(/^nml\s*=\s*/, '') ?? (parts.length >= 2 && /^[a-z_]\w*$/.test(parts[1]) && groups.has(parts[1]) ? parts[1] : undefined);
  return { unit, nml };
}

function mentions(v: VExpr, is: (name: string) => boolean, calls: ReadonlySet<string>): boolean {
  switch (v.kind) {
    case 'var': return is(v.name);
    case 'index': return is(v.access.array) || v.access.subscriptValues.some((x) => mentions(x, is, calls));
    case 'bin': return mentions(v.left, is, calls) || mentions(v.right, is, calls);
    case 'unary':
    case 'cast': return mentions(v.operand, is, calls);
    case 'call': return calls.has(v.name) || v.args.some((a) => mentions(a, is, calls));
    case 'cond': return mentions(v.test, is, calls) || mentions(v.then, is, calls) || mentions(v.else, is, calls);
    default: return false;
  }
}

/** An actual argument by position or by keyword (`status=st`). */
function actual(s: Stmt & { kind: 'call' }, position: number | undefined, keyword: string): VExpr | undefined {
  const k = s.argText.findIndex((t) => new RegExp(`^\\s*${keyword}\\s*=`, 'i').test(t));
  if (k >= 0) return s.args[k];
  if (position === undefined) return undefined;
  const positional = s.argText.findIndex((t) => /^\s*[a-z_]\w*\s*=(?!=)/i.test(t));
  return position < (positional < 0 ? s.args.length : positional) ? s.args[position] : undefined;
}

const line1 = (s: { range: { start: { line: number } } }): number => s.range.start.line + 1;

/**
 * `writes`: how many times each name is written in the file (assignments, read items, DO
 * variables, whole actual arguments), as bindings.ts counts them.
 */
export function inputDefaults(p: Procedure, writes: ReadonlyMap<string, number>, namelists: ReadonlyMap<string, readonly string[]>): InputReading {
  const buffers = new Map<string, Source>();
  const guards = new Set<string>();
  walkStatements(p.body, (s) => {
    if (s.kind === 'call') {
      const at = POSITIONS[s.name];
      if (!at) return;
      const from: Source = ARGUMENT_READERS.has(s.name) ? 'argument' : 'environment';
      const value = actual(s, at.value, 'value');
      if (value?.kind === 'var') buffers.set(value.name, from);
      for (const [pos, key] of [[at.length, 'length'], [at.status, 'status']] as const) {
        const v = actual(s, pos, key);
        if (v?.kind === 'var') guards.add(v.name);
      }
    } else if (s.kind === 'assign' && s.target.kind === 'var' && mentions(s.value, () => false, COUNTERS)) {
      // nargs = command_argument_count()
      guards.add(s.target.name);
    }
  });
  const isGuard = (v: VExpr): boolean => mentions(v, (n) => guards.has(n) || buffers.has(n), COUNTERS);

  /** Names a statement reads from a command-line or environment buffer (`read(arg, *) n`). */
  const inputReads = (stmts: readonly Stmt[]): Map<string, Source> => {
    const out = new Map<string, Source>();
    walkStatements(stmts, (s) => {
      if (s.kind === 'loop') return false;
      if (s.kind !== 'other') return;
      const c = readControl(s.text, namelists);
      const from = c ? buffers.get(c.unit) : undefined;
      if (!from) return;
      for (const v of s.values) if (v.kind === 'var') out.set(v.name, from);
    });
    return out;
  };
  const literal = (v: VExpr): S.Expr | undefined => (v.kind === 'num' && !v.isFloat && /^\d+(_\w+)?$/.test(v.text) ? S.num(Number.parseInt(v.text, 10)) : undefined);
  const singleAssign = (stmts: readonly Stmt[]): (Stmt & { kind: 'assign' }) | undefined => {
    const flat = stmts.length === 1 && stmts[0].kind === 'block' ? stmts[0].body : stmts;
    const s = flat.length === 1 ? flat[0] : undefined;
    return s && s.kind === 'assign' && s.target.kind === 'var' ? s : undefined;
  };

  // The defaults a name has before any test: its declaration's constant initialiser, or a
  // literal assignment in the straight-line part.
  const declared = new Map<string, Declaration>();
  for (const d of p.locals) if (d.init && !d.isConst && !d.isArray && S.isConst(d.init)) declared.set(d.name, d);
  const defaults = new Map<string, { value: S.Expr; line: number; statement: boolean }>();
  for (const [n, d] of declared) defaults.set(n, { value: d.init!, line: d.range.start.line + 1, statement: false });

  const out = new Map<string, InputDefault>();
  const add = (name: string, value: S.Expr, from: Source, line: number, reads: number, statements: number): void => {
    if (out.has(name) || (writes.get(name) ?? 0) !== reads + statements) return;
    const when = from === 'argument' ? 'the default when no argument is given' : 'the default when the environment does not set it';
    out.set(name, { name, value, note: `assuming ${name} = ${S.toString(value)}, ${when} (line ${line}); another value: --bind ${name}=VALUE` });
  };
  const readCount = (name: string): number => {
    let k = 0;
    walkStatements(p.body, (s) => {
      if (s.kind === 'other' && /^\s*read\b/i.test(s.text)) k += s.values.filter((v) => v.kind === 'var' && v.name === name).length;
    });
    return k;
  };

  // Names with a literal value read again from an input the source does not hold.
  const external: { name: string; value: S.Expr; line: number; at: Stmt; what: string }[] = [];

  const straight = (stmts: readonly Stmt[]): void => {
    for (const s of stmts) {
      if (s.kind === 'block') straight(s.body);
      else if (s.kind === 'assign' && s.target.kind === 'var' && s.op === '=') {
        const v = literal(s.value);
        if (v) defaults.set(s.target.name, { value: v, line: line1(s), statement: true });
        else defaults.delete(s.target.name);
      } else if (s.kind === 'if' && isGuard(s.condition)) {
        for (const [mine, other] of [[s.then, s.otherwise], [s.otherwise, s.then]] as const) {
          for (const [name, from] of inputReads(mine)) {
            const reads = readCount(name);
            const alt = singleAssign(other);
            const altValue = alt && alt.target.kind === 'var' && alt.target.name === name ? literal(alt.value) : undefined;
            if (altValue) {
              // if (have an argument) then; read(arg, *) n; else; n = 4096; end if
              add(name, altValue, from, line1(alt!), reads, 1);
              continue;
            }
            const before = defaults.get(name);
            if (before) add(name, before.value, from, before.line, reads, before.statement ? 1 : 0);
          }
        }
      } else if (s.kind === 'other') {
        const c = readControl(s.text, namelists);
        if (!c || buffers.has(c.unit)) continue;
        const names = c.nml ? namelists.get(c.nml) ?? [] : s.values.filter((v) => v.kind === 'var').map((v) => (v as { name: string }).name);
        const what = c.nml ? `the namelist /${c.nml}/` : c.unit === '*' || c.unit === '5' || c.unit === 'input_unit' ? 'standard input' : `unit ${c.unit}`;
        for (const name of names) {
          const before = defaults.get(name);
          if (before) external.push({ name, value: before.value, line: before.line, at: s, what });
          defaults.delete(name);
        }
      }
    }
  };
  straight(p.body);

  // Only names that size something here: a loop's bounds or an allocation.
  const sizes = new Set<string>();
  walkStatements(p.body, (s) => {
    if (s.kind === 'loop') for (const e of [s.lower, s.upper, s.tripCount]) for (const f of e ? S.freeSymbols(e) : []) sizes.add(f);
    if (s.kind === 'other' && /^\s*allocate\b/i.test(s.text)) for (const v of s.values) walkValue(v, (n) => sizes.add(n));
  });
  const findings: Finding[] = [];
  const said = new Set<string>();
  for (const x of external) {
    if (!sizes.has(x.name) || said.has(x.name) || out.has(x.name)) continue;
    said.add(x.name);
    findings.push({
      code: 'unknown-extent',
      severity: 'info',
      range: x.at.range,
      message: `\`${x.name}\` is ${S.toString(x.value)} in the source (line ${x.line}) but is read again from ${x.what} at line ${line1(x.at)}, so the value a run uses is known only at run time and \`${x.name}\` stays symbolic; bind it with \`--bind ${x.name}=<value>\` (or the size-bindings setting).`,
    });
  }
  return { defaults: [...out.values()], findings };
}

function walkValue(v: VExpr, name: (n: string) => void): void {
  switch (v.kind) {
    case 'var': name(v.name); break;
    case 'index': v.access.subscriptValues.forEach((x) => walkValue(x, name)); break;
    case 'bin': walkValue(v.left, name); walkValue(v.right, name); break;
    case 'unary':
    case 'cast': walkValue(v.operand, name); break;
    case 'call': v.args.forEach((a) => walkValue(a, name)); break;
    case 'cond': walkValue(v.test, name); walkValue(v.then, name); walkValue(v.else, name); break;
    default: break;
  }
}
