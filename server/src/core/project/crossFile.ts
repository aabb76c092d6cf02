/**
 * Findings in both files. A time loop's data ledger places a transfer or a stale access that
 * happens in a callee of another file at the call in the time loop's file (data/ledger.ts,
 * data/interpreter.ts): that is where the step is. A person editing the callee must see it too,
 * so each such finding gets a twin at the directive (or access) in the callee's file, and the
 * two point at each other (`related`: LSP relatedInformation, SARIF relatedLocations).
 *
 * Pure: it reads the analyses (and, for the callee lines of stale accesses, the callee text) and
 * adds findings and related locations; it never changes a figure.
 */
import type { FileAnalysis } from '../analyze';
import { otherFileName } from '../paths';
import type { Finding, Range } from '../types';

/** Codes a callee's clause or access gives through a call (the ledger's and the interpreter's). */
const TRANSFER_CODES = new Set<Finding['code']>(['transfer-in-time-loop', 'implicit-transfer']);
/** The interpreter's way of naming a callee line in a message placed at the call. */
const IN_CALLEE = /^In (.+?), line (\d+) \(reached from this call\): /;
const VIA_CLAUSE = / \(the directive is in [^()]*?, line \d+, reached from this call\)/;

const same = (a: Range, b: Range): boolean =>
  a.start.line === b.start.line && a.start.col === b.start.col && a.end.line === b.end.line && a.end.col === b.end.col;

/**
 * Links every finding placed at a call with the place in the callee's file, and gives that
 * file a twin finding there. `analyses` are the files checked together; only files among them
 * receive twins. `textOf` gives a file's text (for the line of a stale access); `otherPaths`
 * names files of the workspace that were not analysed (the editor's neighbours), so that a
 * finding can still point into them.
 */
export function linkAcrossFiles(
  analyses: readonly FileAnalysis[], textOf: (path: string) => string | undefined = () => undefined, otherPaths: readonly string[] = [], root?: string,
): void {
  const byPath = new Map(analyses.map((a) => [a.path, a]));
  const twins = new Map<FileAnalysis, Finding[]>();
  const addTwin = (to: FileAnalysis, f: Finding): void => {
    const list = twins.get(to) ?? [];
    if (![...to.findings, ...list].some((g) => g.code === f.code && same(g.range, f.range) && g.message === f.message)) list.push(f);
    twins.set(to, list);
  };

  for (const a of analyses) {
    // Transfers: the ledger knows the callee file, the clause and the call of each one.
    for (const tl of a.timeLoops) {
      for (const t of tl.ledger?.transfers ?? []) {
        const call = t.via[0];
        if (!t.origin || !call) continue;
        const at = t.at ?? t.range;
        // Several directives reached through one call give several findings at that call: each
        // transfer belongs to the one whose message names its directive's line.
        const atCall = a.findings.filter((f) => TRANSFER_CODES.has(f.code) && f.array === t.array && same(f.range, call));
        const finding = atCall.find((f) => f.message.includes(`, line ${t.range.start.line + 1}, reached from this call`)) ?? (atCall.length === 1 ? atCall[0] : undefined);
        if (!finding) continue;
        relate(finding, { path: t.origin, range: at, message: `the directive that moves \`${t.array}\` (${otherFileName(a.path, t.origin, root)}, line ${at.start.line + 1})` });
        const callee = byPath.get(t.origin);
        if (callee) addTwin(callee, twin(finding, a.path, callee.path, call, at, root));
      }
    }
    // Stale reads and other interpreter findings in a callee: the message names the callee line.
    for (const f of a.findings) {
      const m = IN_CALLEE.exec(f.message);
      if (!m) continue;
      const path = [...analyses.map((b) => b.path), ...otherPaths].find((p) => p !== a.path && otherFileName(a.path, p, root) === m[1]);
      if (!path) continue;
      const line = Number(m[2]) - 1;
      const range = lineRange(textOf(path), line);
      relate(f, { path, range, message: `where it happens (${m[1]}, line ${line + 1})` });
      const callee = byPath.get(path);
      if (callee) addTwin(callee, twin({ ...f, message: f.message.slice(m[0].length) }, a.path, path, f.range, range, root));
    }
  }
  for (const [b, list] of twins) {
    b.findings.push(...list);
    b.findings.sort((x, y) => x.range.start.line - y.range.start.line || x.range.start.col - y.range.start.col);
  }
}

function relate(f: Finding, r: NonNullable<Finding['related']>[number]): void {
  const list = f.related ?? [];
  if (!list.some((x) => x.path === r.path && same(x.range, r.range))) list.push(r);
  f.related = list;
}

/**
 * The callee's copy of a finding placed at a call: the same code, severity and array, at the
 * directive, saying which call of which time loop reaches it. It carries no quick fix (the fix
 * is in the caller's file, where the time loop is).
 */
function twin(f: Finding, callerPath: string, calleePath: string, call: Range, at: Range, root?: string): Finding {
  const caller = otherFileName(calleePath, callerPath, root);
  const text = f.message.replace(VIA_CLAUSE, '').replace(/ \(quick fix available\)/, ` (quick fix available in ${caller})`);
  return {
    code: f.code,
    severity: f.severity,
    range: at,
    ...(f.array ? { array: f.array } : {}),
    message: `From the time loop in ${caller} (the call at line ${call.start.line + 1}): ${text}`,
    related: [{ path: callerPath, range: call, message: `the call in the time loop that reaches this (${caller}, line ${call.start.line + 1})` }],
  };
}

/** The line from its first non-blank character to its end; the line start when the text is unknown. */
function lineRange(text: string | undefined, line: number): Range {
  const l = text?.split('\n')[line]?.replace(/\r$/, '');
  if (l === undefined) return { start: { line, col: 0 }, end: { line, col: 0 } };
  const first = l.length - l.trimStart().length;
  return { start: { line, col: first }, end: { line, col: l.length } };
}
