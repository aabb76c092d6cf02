/**
 * Where hovers answer, and with which card: loop keywords and the directives that offload them
 * (nest card), time-loop keywords (per-step card), array names in clauses and in offloaded or
 * host loop bodies (array card). The smallest range under the cursor wins, so an array name in a
 * clause beats the directive around it.
 */
import type { Range } from 'vscode-languageserver-protocol';
import type { FileAnalysis, NestReport, TimeLoopReport } from '../../core/analyze';
import type { TimeLoopLedger, TransferReport } from '../../core/data/ledger';
import type { LoopStmt, Stmt } from '../../core/model/program';
import { accessesOfStatement, walkStatements } from '../../core/model/values';
import type { Directive, Range as CoreRange, VarRef } from '../../core/types';
import { arrayCard, nestCard, notTimeLoopCard, timeLoopCard, type CardSettings } from './cards';
import type { ViewContext } from './context';
import { nestEstimate, stepEstimate } from './estimates';
import { toLspRange } from './ranges';
import type { HoverEntry } from './types';

export interface HoverIndex {
  hovers: Record<number, HoverEntry[]>;
  cards: string[];
}

/**
 * What a nest, time loop or directive contributes to the hovers, kept with the report it was
 * made from. An edit re-analysed by parts (core/incremental.ts) keeps the reports of every
 * procedure it did not touch, and a report is kept only when nothing it depends on changed (the
 * part holds every procedure sharing a name with the edited ones), so its cards still hold; the
 * settings and file-wide facts the cards also show are in `key`.
 */
interface NestPiece { key: string; card?: string; accesses?: { array: string; start: CoreRange['start'] }[]; arrays: Map<string, string> }
const nestPieces = new WeakMap<NestReport, NestPiece>();
const timePieces = new WeakMap<TimeLoopReport, { key: string; card: string }>();
const clausePieces = new WeakMap<Directive, { key: string; cards: Map<string, string> }>();

/** `check` is called every few dozen cards (the editor's job stops there once the view is stale). */
export function buildHovers(a: FileAnalysis, ctx: ViewContext, s: CardSettings, check: () => void = () => undefined): HoverIndex {
  const out: HoverIndex = { hovers: {}, cards: [] };
  let made = 0;
  const cardIds = new Map<string, number>();
  const card = (key: string, make: () => string): number => {
    let id = cardIds.get(key);
    if (id === undefined) {
      if ((++made & 31) === 0) check();
      id = out.cards.push(make()) - 1;
      cardIds.set(key, id);
    }
    return id;
  };
  const add = (r: CoreRange, id: number): void => {
    const range = toLspRange(r);
    for (let line = range.start.line; line <= range.end.line; line++) (out.hovers[line] ??= []).push({ range, card: id });
  };
  const memoKey = JSON.stringify([s.profileName, s.baseline, a.baseline, a.baselineReason ?? '', [...ctx.userBindings]]);
  const nestPiece = (r: NestReport): NestPiece => {
    let p = nestPieces.get(r);
    if (!p || p.key !== memoKey) nestPieces.set(r, (p = { key: memoKey, arrays: new Map() }));
    return p;
  };
  // The time loops that matter at a position: those of the procedure it is in, and those whose
  // transfers happen there through a call. Indexed once: a file may hold a thousand time loops.
  const ledgers = a.timeLoops.flatMap((t) => (t.ledger ? [t.ledger] : []));
  const byProcedure = new Map<string, Set<TimeLoopLedger>>();
  const note = (proc: string | undefined, l: TimeLoopLedger): void => {
    if (proc === undefined) return;
    byProcedure.set(proc, (byProcedure.get(proc) ?? new Set()).add(l));
  };
  const transfersAt = new Map<string, TransferReport[]>();
  const key = (r: CoreRange): string => `${r.start.line}:${r.start.col}:${r.end.line}:${r.end.col}`;
  for (const l of ledgers) {
    note(l.procedure.name, l);
    for (const t of l.transfers) {
      note(ctx.procedureAt(t.range)?.name, l);
      const k = key(t.at ?? t.range);
      transfersAt.set(k, [...(transfersAt.get(k) ?? []), t]);
    }
  }
  const transfersOf = (name: string, at: CoreRange): { loopLine: number; transfers: TransferReport[] }[] =>
    [...(byProcedure.get(ctx.procedureAt(at)?.name ?? '') ?? [])].map((l) => ({ loopLine: l.loop.keywordRange.start.line + 1, transfers: l.transfers.filter((t) => t.array === name) }));

  // Loop nests: every loop keyword of the nest and the directive that offloads it.
  a.nests.forEach((r, k) => {
    const piece = nestPiece(r);
    const id = card(`nest:${k}`, () => (piece.card ??= nestCard(r, nestEstimate(r), ctx, s)));
    for (const loop of loopsOf(r.nest.root)) if (!loop.implied) add(loop.keywordRange, id);
    if (r.nest.offload) add(r.nest.offload.range, id);
    for (const d of r.nest.root.directives) if (d !== r.nest.offload) add(d.range, id);
  });

  // Time loops.
  a.timeLoops.forEach((t, k) => {
    const id = card(`time:${k}`, () => {
      const kept = timePieces.get(t);
      if (kept && kept.key === memoKey) return kept.card;
      const text = timeLoopCard(t, stepEstimate(t), ctx, s);
      timePieces.set(t, { key: memoKey, card: text });
      return text;
    });
    add(t.timeLoop.loop.keywordRange, id);
  });

  // Loops around kernels that are not time loops (and not nests themselves): why not.
  const nestRoots = new Set(a.nests.map((r) => r.nest.root));
  a.notTimeLoops.forEach((r, k) => {
    if (!nestRoots.has(r.loop)) add(r.loop.keywordRange, card(`not-time:${k}`, () => notTimeLoopCard(r, ctx)));
  });

  // Array names in clauses: the transfers this clause makes, and the array's totals.
  for (const d of a.model.directives) {
    let kept = clausePieces.get(d);
    if (!kept || kept.key !== memoKey) clausePieces.set(d, (kept = { key: memoKey, cards: new Map() }));
    const cards = kept.cards;
    for (const c of d.clauses) {
      for (const v of c.vars ?? []) {
        const at = `${v.range.start.line}:${v.range.start.col}`;
        const id = card(`var:${at}`, () => {
          const known = cards.get(at);
          if (known !== undefined) return known;
          const proc = ctx.procedureAt(v.range);
          const here = [...(transfersAt.get(key(v.range)) ?? []), ...(transfersAt.get(key(d.range)) ?? []).filter((t) => !t.at)].filter((t) => t.array === v.name);
          const text = arrayCard({ name: v.name, size: ctx.arraySize(v.name, proc, v), here, all: transfersOf(v.name, v.range) });
          cards.set(at, text);
          return text;
        });
        add(nameRange(v), id);
      }
    }
  }

  // Array names in loop bodies: the array card with this nest's stencil facts.
  a.nests.forEach((r, k) => {
    const piece = nestPiece(r);
    piece.accesses ??= accessStarts(r);
    for (const acc of piece.accesses) {
      const id = card(`acc:${k}:${acc.array}`, () => {
        const known = piece.arrays.get(acc.array);
        if (known !== undefined) return known;
        const fp = r.cost.footprints.find((f) => f.array === acc.array);
        const text = arrayCard({
          name: acc.array,
          size: ctx.arraySize(acc.array, r.nest.procedure),
          here: [],
          all: transfersOf(acc.array, r.nest.root.range),
          footprint: fp ? { reads: fp.reads, writes: fp.writes, radius: fp.radius, inPlace: fp.inPlace } : undefined,
        });
        piece.arrays.set(acc.array, text);
        return text;
      });
      const start = acc.start;
      add({ start, end: { line: start.line, col: start.col + acc.array.length } }, id);
    }
  });

  return out;
}

/** Where each array access of a nest's body starts, in statement order. */
function accessStarts(r: NestReport): { array: string; start: CoreRange['start'] }[] {
  const list: { array: string; start: CoreRange['start'] }[] = [];
  walk(r.nest.root.body, (s) => {
    for (const acc of accessesOfStatement(s)) list.push({ array: acc.array, start: acc.range.start });
  });
  return list;
}

/** The hover under a position: the smallest range that contains it. */
export function findHover(index: { hovers: Record<number, HoverEntry[]> }, line: number, character: number): HoverEntry | undefined {
  let best: HoverEntry | undefined;
  for (const e of index.hovers[line] ?? []) {
    if (!inside(e.range, line, character)) continue;
    if (!best || size(e.range) < size(best.range)) best = e;
  }
  return best;
}

function inside(r: Range, line: number, ch: number): boolean {
  const afterStart = line > r.start.line || (line === r.start.line && ch >= r.start.character);
  const beforeEnd = line < r.end.line || (line === r.end.line && ch < r.end.character);
  return afterStart && beforeEnd;
}

/** Ranges compared by lines first, then characters, so a one-line name beats a multi-line directive. */
function size(r: Range): number {
  return (r.end.line - r.start.line) * 1e6 + (r.end.character - r.start.character);
}

/** The name part of a clause variable (`p` of `p[0:N]`), when it sits on one line. */
function nameRange(v: VarRef): CoreRange {
  const s = v.range.start;
  return v.range.end.line === s.line && v.text.startsWith(v.name) ? { start: s, end: { line: s.line, col: s.col + v.name.length } } : v.range;
}

function loopsOf(root: LoopStmt): LoopStmt[] {
  const out: LoopStmt[] = [root];
  walk(root.body, (s) => {
    if (s.kind === 'loop') out.push(s);
  });
  return out;
}

function walk(stmts: Stmt[], visit: (s: Stmt) => void): void {
  walkStatements(stmts, (s) => {
    visit(s);
  });
}
