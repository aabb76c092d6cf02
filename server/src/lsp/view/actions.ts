/**
 * Quick fixes. The core attaches fixes to findings (`Finding.fixes`); each becomes a code action
 * on that finding's diagnostic. Until the core fills them for data regions, the data region a
 * time loop's ledger suggests (`dataRegion.edits`) is offered on every transfer finding of that
 * loop — whether the finding sits in the loop or in a function the loop calls.
 */
import type { FileAnalysis } from '../../core/analyze';
import type { TimeLoopLedger } from '../../core/data/ledger';
import type { Finding } from '../../core/types';
import { containsRange, lineInsertionsToEdits, toLspEdit } from './ranges';
import type { ActionEntry } from './types';

const REGION_CODES = new Set(['transfer-in-time-loop', 'implicit-transfer']);

/**
 * The ledger whose time loop a finding belongs to: the first with a transfer at the finding's
 * range, else the first whose loop contains it. The transfers are indexed by range once per view
 * (a file of a thousand time loops must not search every transfer per finding).
 */
export function ledgerFinder(ledgers: readonly TimeLoopLedger[]): (f: Finding) => TimeLoopLedger | undefined {
  const key = (r: Finding['range']): string => `${r.start.line}:${r.start.col}:${r.end.line}:${r.end.col}`;
  const atTransfer = new Map<string, TimeLoopLedger>();
  for (const l of ledgers) {
    for (const t of l.transfers) {
      if (t.at && !atTransfer.has(key(t.at))) atTransfer.set(key(t.at), l);
      if (!atTransfer.has(key(t.range))) atTransfer.set(key(t.range), l);
    }
  }
  return (f) => atTransfer.get(key(f.range)) ?? ledgers.find((l) => containsRange(l.loop.range, f.range));
}

export function regionTitle(l: TimeLoopLedger): string {
  const r = l.dataRegion!;
  const clauses = r.clauses.map((c) => `${c.clause}(${c.array})`).join(' ');
  const updates = r.updates.length > 0 ? ` and ${r.updates.length} update${r.updates.length === 1 ? '' : 's'}` : '';
  return `Insert the suggested data region around the time loop at line ${l.loop.keywordRange.start.line + 1} (${clauses})${updates}`;
}

/** `diagnosticOf` maps a finding index to its diagnostic index (findings turned off have none). */
export function buildActions(a: FileAnalysis, text: string, diagnosticOf: (findingIndex: number) => number | undefined): ActionEntry[] {
  const ledgerOf = ledgerFinder(a.timeLoops.flatMap((t) => (t.ledger ? [t.ledger] : [])));
  const out: ActionEntry[] = [];
  a.findings.forEach((f, k) => {
    const diagnostic = diagnosticOf(k);
    if (diagnostic === undefined) return;
    const titles = new Set<string>();
    (f.fixes ?? []).forEach((fix, i) => {
      titles.add(fix.title);
      out.push({ diagnostic, title: fix.title, edits: fix.edits.map(toLspEdit), preferred: i === 0 });
    });
    if (!REGION_CODES.has(f.code)) return;
    const l = ledgerOf(f);
    if (!l?.dataRegion || l.dataRegion.edits.length === 0) return;
    // The core's own region fix, when it has one, says the same thing: offer it once.
    if ((f.fixes ?? []).some((fix) => /data region/i.test(fix.title))) return;
    const title = regionTitle(l);
    if (titles.has(title)) return;
    out.push({ diagnostic, title, edits: lineInsertionsToEdits(text, l.dataRegion.edits), preferred: (f.fixes ?? []).length === 0 });
  });
  return out;
}
