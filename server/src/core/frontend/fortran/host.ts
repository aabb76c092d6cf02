/**
 * Host association (Fortran 2008 §16.5.1.4, from memory): an internal procedure sees the
 * variables of the procedure or main program that contains it, without declaring them. The
 * program model has no nesting of procedures, so the link is made explicit the way Fortran
 * itself implements it, by reference: each host array that an internal procedure uses becomes
 * an extra parameter after its dummy arguments, and every call of the procedure inside its host
 * passes the host's array there. The data ledger then follows the array from the host's frame
 * into the internal procedure exactly as it follows an array passed as an argument, so a clause
 * there (`!$acc update self(field(:, 1))`) moves the host's array.
 *
 * A host's scalar dummy arguments are linked the same way, because their values come from the
 * host's callers (`u(1:m)` with the host's dummy `m`). Other host scalars need no link: their
 * constant values bind in the internal procedure directly (bindings.ts), and module variables
 * are the file's globals, visible everywhere.
 */
import * as S from '../../symbolic';
import type { Declaration, Procedure, Stmt, VExpr } from '../../model/program';
import { forEachCallInValue, valuesOfStatement, walkStatements } from '../../model/values';
import type { Scope } from './scope';

/** An internal procedure as read: its scope, its host's scope and how many dummies it has. */
export interface InternalUnit {
  procedure: Procedure;
  scope: Scope;
  host: Scope;
  dummies: number;
}

/** The names in one bound of a clause's array section, read from its text when the reader left no form. */
function boundNames(e: S.Expr | undefined, text: string | undefined): string[] {
  const form = e ?? (text ? S.parseExpr(text.toLowerCase(), 'fortran') : undefined);
  return form ? S.freeSymbols(form) : [];
}

/** Every name the directives on or in `body` list in their clauses, with the names in their sections' bounds. */
function directiveNames(body: readonly Stmt[]): string[] {
  const out: string[] = [];
  walkStatements(body, (s) => {
    const ds = s.kind === 'directive' ? [s.directive, ...s.directives] : s.directives;
    for (const d of ds) {
      for (const c of d.clauses) {
        for (const v of c.vars ?? []) {
          out.push(v.name);
          for (const dim of v.dims) out.push(...boundNames(dim.exprs?.lower, dim.lower), ...boundNames(dim.exprs?.upper, dim.upper));
        }
      }
    }
  });
  return out;
}

/** The host arrays and scalar dummies an internal procedure uses, in order of first mention. */
function hostLinks(unit: InternalUnit): Declaration[] {
  const out = new Map<string, Declaration>();
  for (const name of [...unit.scope.references, ...directiveNames(unit.procedure.body)]) {
    if (out.has(name)) continue;
    const d = unit.scope.hostAssociated(name);
    if (d && (d.isArray || (d.scope === 'param' && !d.isConst))) out.set(name, d);
  }
  return [...out.values()];
}

/** Appends the host's names to a call of an internal procedure, after its dummies. */
function extendCall(args: VExpr[], argText: string[] | undefined, dummies: number, names: readonly string[]): void {
  // A call that leaves optional dummies out still lines the host's names up behind all dummies.
  while (args.length < dummies) {
    args.push({ kind: 'opaque', text: '' });
    argText?.push('');
  }
  for (const n of names) {
    args.push({ kind: 'var', name: n });
    argText?.push(n);
  }
}

/**
 * Links the internal procedures of a file to their hosts' variables. `units` maps each scope to
 * its procedure, so that the calls can be found in the host and in its other internal
 * procedures (the only places an internal procedure can be called from). Each host's family is
 * walked once, whatever the number of its internal procedures.
 */
export function linkHostAssociation(internals: readonly InternalUnit[], procedureOf: (s: Scope) => Procedure | undefined): void {
  const families = new Map<Scope, { members: Procedure[]; linked: Map<string, Linked> }>();
  for (const unit of internals) {
    let family = families.get(unit.host);
    if (!family) {
      family = { members: [], linked: new Map() };
      families.set(unit.host, family);
    }
    family.members.push(unit.procedure);
    const links = hostLinks(unit);
    if (links.length === 0) continue;
    unit.procedure.params.push(...links);
    family.linked.set(unit.procedure.name, { dummies: unit.dummies, names: links.map((d) => d.name) });
  }
  // One node may be reached twice (a value shared by statements the front end made); extend it once.
  const done = new WeakSet<object>();
  const extend = (node: object, args: VExpr[], argText: string[] | undefined, l: Linked | undefined): void => {
    if (!l || done.has(node)) return;
    done.add(node);
    extendCall(args, argText, l.dummies, l.names);
  };
  for (const [host, { members, linked }] of families) {
    if (linked.size === 0) continue;
    const hostProc = procedureOf(host);
    for (const p of hostProc ? [hostProc, ...members] : members) {
      walkStatements(p.body, (s) => {
        if (s.kind === 'call') extend(s, s.args, s.argText, linked.get(s.name));
        for (const v of valuesOfStatement(s)) forEachCallInValue(v, (c) => extend(c, c.args, undefined, linked.get(c.name)));
      });
    }
  }
}

interface Linked {
  dummies: number;
  names: string[];
}
