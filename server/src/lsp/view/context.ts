/**
 * Per-analysis lookups the cards need and the FileAnalysis does not keep: the size bindings of
 * each procedure (rebuilt with the core's own functions, so they agree with the ledgers), the
 * declaration an array name refers to, and that array's size.
 */
import * as S from '../../core/symbolic';
import type { FileAnalysis } from '../../core/analyze';
import { type BindingMap, callSiteBindings, procedureBindings } from '../../core/analysis/bindings';
import type { Declaration, Procedure } from '../../core/model/program';
import { findByName } from '../../core/model/names';
import type { Range, VarRef } from '../../core/types';
import { containsRange } from './ranges';

export interface ArraySize {
  elementType: string;
  elementBytes: number;
  elements: { value: number | null; expr: string } | null;
  bytes: number | null;
}

export class ViewContext {
  private readonly bindingsByProc = new Map<string, BindingMap>();
  private readonly callSite;

  constructor(
    readonly analysis: FileAnalysis,
    readonly userBindings: ReadonlyMap<string, number>,
  ) {
    this.callSite = callSiteBindings(analysis.model);
  }

  private readonly procByLine = new Map<number, Procedure | undefined>();

  /** The procedure around a range; cached by line, since views ask for thousands of positions. */
  procedureAt(range: Range): Procedure | undefined {
    const line = range.start.line;
    if (!this.procByLine.has(line)) this.procByLine.set(line, this.analysis.model.procedures.find((p) => p.range.start.line <= line && line <= p.range.end.line));
    const p = this.procByLine.get(line);
    return p && containsRange(p.range, range) ? p : this.analysis.model.procedures.find((q) => containsRange(q.range, range));
  }

  bindingsOf(proc: Procedure | undefined): BindingMap {
    const key = proc?.name ?? '';
    let b = this.bindingsByProc.get(key);
    if (!b) {
      b = procedureBindings(this.analysis.model, proc, this.userBindings, this.callSite);
      this.bindingsByProc.set(key, b);
    }
    return b;
  }

  declarationOf(name: string, proc: Procedure | undefined): Declaration | undefined {
    const own = proc ? findByName(proc.params, name) ?? findByName(proc.locals, name) : undefined;
    return own ?? findByName(this.analysis.model.globals, name);
  }

  private notUnderstoodByNest?: Map<number, FileAnalysis['notUnderstood']>;
  /** What the model could not read in the nest at a line (grouped once per view). */
  notUnderstoodAt(nestLine: number): FileAnalysis['notUnderstood'] {
    if (!this.notUnderstoodByNest) {
      this.notUnderstoodByNest = new Map();
      for (const u of this.analysis.notUnderstood) {
        const list = this.notUnderstoodByNest.get(u.nestLine);
        if (list) list.push(u);
        else this.notUnderstoodByNest.set(u.nestLine, [u]);
      }
    }
    return this.notUnderstoodByNest.get(nestLine) ?? [];
  }

  /** The free symbols of an expression with the values the procedure binds them to (undefined when unbound). */
  symbolValues(e: S.Expr, proc: Procedure | undefined): [string, number | undefined][] {
    const b = this.bindingsOf(proc);
    return S.freeSymbols(e).sort().map((s) => [s, S.evaluate(S.sym(s), b)]);
  }

  /** Size of a declared array; a clause section gives the size when the declaration does not (pointer parameters). */
  arraySize(name: string, proc: Procedure | undefined, section?: VarRef): ArraySize | undefined {
    const decl = this.declarationOf(name, proc);
    const b = this.bindingsOf(proc);
    let count: S.Expr | undefined = decl?.elementCount ?? (decl && decl.dims.length > 0 ? S.mul(...decl.dims) : undefined);
    if (!count && section) count = sectionCount(section);
    if (!decl && !count) return undefined;
    const elementBytes = decl?.type.bytes ?? 0;
    const value = count ? S.evaluate(count, b) ?? null : null;
    return {
      elementType: decl?.type.name ?? 'unknown',
      elementBytes,
      elements: count ? { value, expr: S.toString(count) } : null,
      bytes: value !== null && elementBytes > 0 ? value * elementBytes : null,
    };
  }
}

/** Elements of an array section: the product of C lengths or Fortran (upper − lower + 1). */
function sectionCount(v: VarRef): S.Expr | undefined {
  if (v.dims.length === 0) return undefined;
  const factors: S.Expr[] = [];
  for (const d of v.dims) {
    if (d.single) continue;
    const e = d.exprs;
    if (e?.length) factors.push(e.length);
    else if (e?.upper) factors.push(S.add(S.sub(e.upper, e.lower ?? S.num(1)), S.num(1)));
    else return undefined;
  }
  return factors.length > 0 ? S.mul(...factors) : S.num(1);
}
