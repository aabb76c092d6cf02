/**
 * Translation between the two directive models: OpenACC 3.3 ↔ OpenMP 5.2 (target offload).
 * Pure text in, text and line edits out; only directive lines (and the `_OPENACC`/`_OPENMP`
 * guards, the model's header or module, and a few API calls) change. Whatever has no
 * counterpart is commented out with a note in the language's comment syntax and in `notes`.
 * docs/translate.md lists the correspondences with their sections.
 */
import { type Item, parseItems, splitConstruct } from './clauses';
import { accToOmp } from './accToOmp';
import { isOffloadOmp, ompToAcc } from './ompToAcc';
import { type Directive, type Language, type Model, cCommentLines, findDirectives, findPragmaOperators, splitLines } from './scan';
import { cStructure, fortranLoopEnd, fortranUnitDepth } from './structure';
import { type Context, NOTE_TAG, type Target, type Translation } from './types';

export type { Target } from './types';
export { unifiedDiff } from './diff';

export interface Position { line: number; character: number }
export interface TranslateEdit { range: { start: Position; end: Position }; newText: string }
export interface TranslateNote { line: number; message: string }
export interface TranslateResult {
  text: string;
  edits: TranslateEdit[];
  /** Lines are 0-based lines of the input text. */
  notes: TranslateNote[];
  /** Number of directives and other lines (guards, includes, API calls) that were rewritten. */
  changed: number;
  /** For each line of `text`, the 0-based input line it came from (added note lines: the line they annotate). */
  lineOrigin: number[];
}

interface Parsed { d: Directive; construct: string; constructArgs?: string; clauses: Item[]; regionEnd: number }

/** The change planned for one input line: lines before it, its replacement (null: removed), lines after. */
interface LinePlan { before: string[]; replace?: string[] | null; after: string[] }

const ACC_COMPUTE = new Set(['parallel', 'kernels', 'serial', 'parallel loop', 'kernels loop', 'serial loop']);
const STANDALONE: Record<Model, RegExp> = {
  acc: /^(enter data|exit data|update|wait|cache|declare|routine|init|shutdown|set|end\b.*)$/,
  omp: /^(target (enter data|exit data|update)|taskwait|barrier|flush|declare\b.*|begin declare target|end\b.*|requires|taskyield|ordered|section|scan|cancel.*)$/,
};
const OMP_LOOP = /(^|\s)(for|do|loop|simd|distribute)$/;

function isLoop(model: Model, construct: string): boolean {
  return model === 'acc' ? /(^|\s)loop$/.test(construct) : OMP_LOOP.test(construct) && !construct.startsWith('declare');
}

/**
 * The names the translation reads from code lines: C pointers (declared `T *p`) and procedures.
 * (Besides them it reads code lines only for where statements end, the names used inside each
 * directive's region, and the models' API calls and headers.)
 */
export function translationNames(text: string, fortran: boolean): { pointerNames: Set<string>; functionNames: Set<string> } {
  const pointerNames = new Set<string>();
  const functionNames = new Set<string>();
  if (!fortran) {
    for (const m of text.matchAll(/\b(?:float|double|int|char|long|short|unsigned|signed|size_t|void|bool|_Bool|[A-Za-z_]\w*_t)\s*\*+\s*(?:(?:const|restrict|__restrict__|__restrict)\s+)*([A-Za-z_]\w*)/g)) pointerNames.add(m[1]);
    for (const m of text.matchAll(/^[A-Za-z_][\w\s\*]*?\b([A-Za-z_]\w*)\s*\([^;{}]*\)\s*(?:\{|;|$)/gm)) functionNames.add(m[1]);
  } else {
    for (const m of text.matchAll(/\b(?:subroutine|function)\s+([A-Za-z_]\w*)/gi)) functionNames.add(m[1].toLowerCase());
  }
  return { pointerNames, functionNames };
}

/**
 * `opts.check` is called every few thousand lines and every few dozen directives: an editor that
 * no longer needs the result (a newer edit) throws there, so a large file's translation does not
 * hold the analysis thread.
 */
export function translateDirectives(text: string, language: Language, to: Target, opts: { fixedForm?: boolean; check?: () => void } = {}): TranslateResult {
  const { lines, eol } = splitLines(text);
  const fixed = language === 'fortran' && !!opts.fixedForm;
  const fortran = language === 'fortran';
  const from: Model = to === 'openmp' ? 'acc' : 'omp';
  const toModel: Model = to === 'openmp' ? 'omp' : 'acc';
  const notes: TranslateNote[] = [];
  const plans = new Map<number, LinePlan>();
  let changed = 0;
  const plan = (line: number): LinePlan => {
    let p = plans.get(line);
    if (!p) plans.set(line, (p = { before: [], after: [] }));
    return p;
  };
  const comment = (indent: string, msg: string): string => {
    const m = msg.replace(/\*\//g, '* /');
    if (!fortran) return `${indent}/* ${NOTE_TAG} ${m} */`;
    return fixed ? `! ${NOTE_TAG} ${m}` : `${indent}! ${NOTE_TAG} ${m}`;
  };

  const cs = fortran ? undefined : cStructure(lines, opts.check);
  const unitDepth = fortran ? fortranUnitDepth(lines, fixed) : undefined;

  // Parse every directive of both models; the other model's directives give context only.
  const parsed: Parsed[] = [];
  const blockStack: Parsed[] = [];
  let seen = 0;
  for (const d of findDirectives(lines, language, fixed)) {
    if ((++seen & 63) === 0) opts.check?.();
    const items = parseItems(d.segments);
    const sc = items && splitConstruct(d.model, items);
    if (!sc) {
      if (d.model === from) notes.push({ line: d.startLine, message: `malformed or unknown ${d.model} directive left unchanged: ${d.body}` });
      continue;
    }
    const p: Parsed = { d, construct: sc.construct, constructArgs: sc.constructArgs, clauses: sc.clauses, regionEnd: d.endLine };
    const standalone = STANDALONE[d.model].test(sc.construct);
    if (!standalone) {
      if (!fortran) p.regionEnd = cs!.statementEnd(d.endLine);
      else if (isLoop(d.model, sc.construct) || sc.construct === 'atomic' && d.model === 'acc') p.regionEnd = fortranLoopEnd(lines, d.endLine, fixed);
      else if (d.model === 'omp' && sc.construct.startsWith('atomic')) p.regionEnd = fortranLoopEnd(lines, d.endLine, fixed);
      else blockStack.push(p);
    } else if (fortran && sc.construct.startsWith('end ')) {
      const name = sc.construct.slice(4);
      for (let k = blockStack.length - 1; k >= 0; k--) {
        if (blockStack[k].construct === name && blockStack[k].d.model === d.model) {
          blockStack[k].regionEnd = d.startLine;
          blockStack.splice(k);
          break;
        }
      }
    }
    parsed.push(p);
  }
  for (const p of blockStack) if (p.regionEnd === p.d.endLine) p.regionEnd = lines.length - 1;

  const contains = (outer: Parsed, line: number) => outer.d.endLine < line && line <= outer.regionEnd;

  // Names for the notes and for declare target lists.
  const { pointerNames, functionNames } = translationNames(text, fortran);

  /** Contiguous note lines (from an earlier translation) directly above a line. */
  const noteLinesAbove = (line: number): number[] => {
    const out: number[] = [];
    for (let l = line - 1; l >= 0; l--) {
      const t = lines[l].trim();
      if (!t.includes(NOTE_TAG) || /\(left out\): /.test(t) || !(t.startsWith('/*') || t.startsWith('!'))) break;
      out.push(l);
    }
    return out;
  };

  const translations = new Map<Parsed, Translation>();
  const inDeclareTarget = (line: number) => parsed.some((q) => q.d.model === 'omp' && (q.construct === 'declare target' || q.construct === 'begin declare target') && q.constructArgs === undefined && q.clauses.length === 0 && parsed.some((e) => e.d.model === 'omp' && e.construct === 'end declare target' && e.d.startLine > q.d.startLine && e.d.startLine > line && q.d.startLine < line));

  for (const p of parsed) {
    if (p.d.model !== from) continue;
    const { d } = p;
    const encl = parsed.filter((q) => q !== p && contains(q, d.startLine));
    const accComputeP = [...encl].reverse().find((q) => q.d.model === 'acc' && ACC_COMPUTE.has(q.construct));
    const markerLines = noteLinesAbove(d.startLine);
    const ctx: Context = {
      language,
      accCompute: accComputeP ? { construct: accComputeP.construct } : undefined,
      insideAccLoop: !!accComputeP && encl.some((q) => q.d.model === 'acc' && q.construct === 'loop' && q.d.startLine > accComputeP.d.startLine),
      ompEnclosing: (() => {
        const omp = encl.filter((q) => q.d.model === 'omp');
        const t = omp.findIndex((q) => q.construct.startsWith('target'));
        return t < 0 ? [] : omp.slice(t).map((q) => q.construct);
      })(),
      fileScope: fortran ? unitDepth![d.startLine] === 0 : cs!.depthAt(d.startLine) === 0,
      hasNestedLoops: parsed.some((q) => q !== p && q.d.model === 'omp' && contains(p, q.d.startLine) && isLoop('omp', q.construct)),
      markers: markerLines.map((l) => lines[l]),
      pointerNames,
      regionNames: new Set(p.regionEnd > d.endLine ? lines.slice(d.endLine + 1, p.regionEnd + 1).join('\n').match(/(?<![\w.])[A-Za-z_]\w*/g) ?? [] : []),
      functionNames,
    };
    if (from === 'omp' && inDeclareTarget(d.startLine)) ctx.markers.push('in declare target');

    let t: Translation;
    if (p.construct.startsWith('end ') && fortran) {
      t = endDirective(p, parsed, translations, from);
    } else if (from === 'acc') {
      t = accToOmp(p.construct, p.constructArgs, p.clauses, ctx);
    } else {
      if (ctx.ompEnclosing.length === 0 && !isOffloadOmp(p.construct) && !(p.construct === 'atomic' && ctx.markers.includes('in declare target')) && !(p.construct === 'taskwait' && (hasNowaitTargets(parsed) || !hasHostTasks(parsed)))) continue;
      t = ompToAcc(p.construct, p.constructArgs, p.clauses, ctx);
    }
    if (t.construct === '' && !t.leftOut && !t.dropped) continue;
    keepOrder(t, p.clauses);
    translations.set(p, t);
    changed++;
    const indent = fixed ? '' : d.indent;
    // Notes an earlier translation wrote above this directive no longer apply.
    for (const l of markerLines) plan(l).replace = null;
    for (const n of t.notes) notes.push({ line: d.startLine, message: n });
    const noteLines = t.notes.map((n) => comment(indent, n));
    const first = plan(d.startLine);
    for (let l = d.startLine + 1; l <= d.endLine; l++) plan(l).replace = null;
    if (t.leftOut) {
      notes.push({ line: d.startLine, message: `${t.leftOut} (left out)` });
      const original = fortran ? `!$${d.model} ${d.body}` : `#pragma ${d.model} ${d.body}`;
      first.replace = [...noteLines, comment(indent, `${t.leftOut} (left out): ${original}`)];
      continue;
    }
    if (t.dropped) {
      handleDropped(p, t);
      continue;
    }
    first.replace = [...noteLines, ...emit(d, t, toModel, fixed)];
    if (t.wrapDeclaration && cs) {
      const end = cs.declarationEnd(d.endLine);
      plan(end).after.push(`${pragmaLead(d, toModel)}end declare target`);
    }
  }

  function handleDropped(p: Parsed, t: Translation): void {
    const d = p.d;
    const first = plan(d.startLine);
    if (p.construct === 'declare target' || p.construct === 'begin declare target') {
      // The delimited declare target block: each function inside gets acc routine seq, each
      // variable an acc declare copyin after its declaration (OpenACC 3.3 §2.15.1, §2.13).
      first.replace = null;
      const end = parsed.find((e) => e.d.model === 'omp' && e.construct === 'end declare target' && e.d.startLine > d.startLine);
      const stop = end ? end.d.startLine : lines.length;
      let pos = d.endLine;
      while (cs) {
        const s = cs.nextTokenLine(pos);
        if (s < 0 || s >= stop) break;
        const e = cs.declarationEnd(pos);
        const toks = cs.tokensBetween(pos, e);
        const indent = /^\s*/.exec(lines[s])![0];
        const firstParen = toks.indexOf('(');
        const firstEq = toks.findIndex((x) => x === '=' || x === ';' || x === '{' || x === '[');
        if (firstParen >= 0 && (firstEq < 0 || firstParen < firstEq)) {
          plan(s).before.push(`${indent}${pragmaLead(d, 'acc')}routine seq`);
        } else {
          const names = declaredNames(toks);
          if (names.length > 0) plan(e).after.push(`${indent}${pragmaLead(d, 'acc')}declare copyin(${names.join(', ')})`);
        }
        if (e <= pos) break;
        pos = e;
      }
      return;
    }
    if (p.construct === 'end declare target') { first.replace = null; return; }
    // Structure OpenACC does not need (teams or parallel nested in a target region): a note stays.
    first.replace = [comment(fixed ? '' : d.indent, `${t.dropped} (left out): ${fortran ? `!$${d.model}` : '#pragma ' + d.model} ${d.body}`)];
    notes.push({ line: d.startLine, message: `${t.dropped} (left out)` });
  }

  // _Pragma("acc …") operators: the string is rewritten in place.
  if (!fortran) {
    const commentsC = cCommentLines(lines);
    for (const op of findPragmaOperators(lines, commentsC)) {
      if (op.model !== from) continue;
      const items = parseItems([{ words: op.body }]);
      const sc = items && splitConstruct(op.model, items);
      if (!sc) { notes.push({ line: op.line, message: `malformed _Pragma operand left unchanged: ${op.body}` }); continue; }
      const ctx: Context = { language, insideAccLoop: false, ompEnclosing: [], fileScope: false, hasNestedLoops: false, markers: [], pointerNames, regionNames: new Set(), functionNames };
      const t = from === 'acc' ? accToOmp(sc.construct, sc.constructArgs, sc.clauses, ctx) : ompToAcc(sc.construct, sc.constructArgs, sc.clauses, { ...ctx, ompEnclosing: sc.construct.startsWith('target') ? [] : ['target'] });
      if (t.leftOut || t.dropped || t.construct === '') {
        notes.push({ line: op.line, message: `_Pragma("${from} ${op.body}") left unchanged: ${t.leftOut ?? t.dropped ?? 'not an offload directive'}` });
        continue;
      }
      for (const n of t.notes) notes.push({ line: op.line, message: n });
      const body = `${toModel} ${directiveWords(t)}`.replace(/\\/g, '\\\\').replace(/"/g, '\\"');
      const p = plan(op.line);
      const cur = p.replace?.[0] ?? lines[op.line];
      // Offsets shift when an earlier operator on the line changed length: search again.
      const at = cur.indexOf(`"${op.model}`, 0);
      const endq = cur.indexOf('"', at + 1 + (op.end - op.start));
      p.replace = [cur.slice(0, at + 1) + body + cur.slice(endq)];
      changed++;
    }
  }

  // Restores directives an earlier translation left out, when translating back to their model.
  lines.forEach((l, i) => {
    const m = fortran
      ? /^(\s*)! offload-ledger translate: .*?\(left out\): (!\$(acc|omp)\b.*)$/.exec(l)
      : /^(\s*)\/\* offload-ledger translate: .*?\(left out\): (#\s*pragma\s+(acc|omp)\b.*?) \*\/\s*$/.exec(l);
    if (!m || m[3] !== toModel || plans.get(i)?.replace !== undefined) return;
    plan(i).replace = [m[1] + m[2].replace(/\* \//g, '*/')];
    changed++;
  });

  changed += rewriteGuardsAndApi(lines, language, from, toModel, plans, plan, notes);

  return assemble(lines, eol, plans, notes, changed);
}

/** Keeps the translated clauses in the order of their source clauses (added ones last). */
function keepOrder(t: Translation, source: Item[]): void {
  const rank = (c: Translation['clauses'][number]) => (c.src ? source.indexOf(c.src) : source.length);
  t.clauses = t.clauses.map((c, i) => ({ c, i })).sort((x, y) => rank(x.c) - rank(y.c) || x.i - y.i).map((x) => x.c);
}

/** Host tasks make a taskwait a host synchronisation, which acc wait is not. */
function hasHostTasks(parsed: Parsed[]): boolean {
  return parsed.some((p) => p.d.model === 'omp' && /^(parallel )?(task|taskloop|taskgroup|masked taskloop)\b/.test(p.construct));
}

function hasNowaitTargets(parsed: Parsed[]): boolean {
  return parsed.some((p) => p.d.model === 'omp' && p.construct.startsWith('target') && p.clauses.some((c) => c.name === 'nowait'));
}

/** Names declared by a C declaration's tokens: the identifier before `[`, `=`, `,` or `;` at depth 0. */
function declaredNames(toks: string[]): string[] {
  const out: string[] = [];
  let depth = 0;
  let last: string | undefined;
  let taken = false;
  for (const t of toks) {
    if (t === '(' || t === '[' || t === '{') {
      if (depth === 0 && t === '[' && last && !taken) { out.push(last); taken = true; }
      depth++;
      continue;
    }
    if (t === ')' || t === ']' || t === '}') { depth--; continue; }
    if (depth > 0) continue;
    if (t === '=' || t === ',' || t === ';') {
      if (last && !taken && t !== ',') out.push(last);
      else if (last && !taken) out.push(last);
      taken = t === '=';
      if (t === ',' || t === ';') { taken = false; last = undefined; }
      continue;
    }
    if (/^[A-Za-z_]\w*$/.test(t)) { last = t; }
  }
  return [...new Set(out)];
}

/** Fortran end directives follow their begin directive's translation. */
function endDirective(p: Parsed, parsed: Parsed[], translations: Map<Parsed, Translation>, from: Model): Translation {
  const name = p.construct.slice(4);
  const out: Translation = { construct: '', clauses: [], notes: [], other: [] };
  const begin = [...parsed].reverse().find((q) => q.d.model === from && q.d.startLine < p.d.startLine && q.construct === name && translations.has(q));
  if (!begin) {
    if (from === 'omp') return out;
    return { ...out, leftOut: `no matching begin directive for end ${name}` };
  }
  const t = translations.get(begin)!;
  if (t.leftOut) return { ...out, leftOut: `the begin directive was left out` };
  if (t.dropped) return { ...out, dropped: `the end of ${t.construct}` };
  // OpenACC has no end directive for a nested loop construct.
  if (t.construct === 'loop') return { ...out, dropped: 'the end of a nested loop construct' };
  if (t.construct === 'simd' || /^(distribute )?parallel (do|for)$/.test(t.construct)) return { ...out, construct: `end ${t.construct}` };
  out.construct = `end ${t.construct}`;
  return out;
}

function directiveWords(t: Translation): string {
  const head = t.constructArgs !== undefined ? `${t.construct}(${t.constructArgs})` : t.construct;
  return [head, ...t.clauses.map((c) => c.text)].join(' ');
}

/** `#pragma omp ` with the original spelling of `#pragma`. */
function pragmaLead(d: Directive, model: Model): string {
  const lead = d.segments[0].lead;
  const m = /^(\s*#\s*pragma\s+)/.exec(lead);
  return `${m ? m[1] : '#pragma '}${model} `;
}

function swapSentinel(lead: string, model: Model): string {
  return lead.replace(/(acc|omp|ACC|OMP|Acc|Omp)(?=(\s*&)?\s*$|[&\s0]|$)/, (w) => (w === w.toUpperCase() ? model.toUpperCase() : model));
}

/** The translated directive's lines, keeping each clause on the line its source clause stood on. */
function emit(d: Directive, t: Translation, model: Model, fixed: boolean): string[] {
  const segs: string[][] = d.segments.map(() => []);
  segs[0].push(t.constructArgs !== undefined ? `${t.construct}(${t.constructArgs})` : t.construct);
  for (const c of t.clauses) segs[Math.min(c.seg, segs.length - 1)].push(c.text);
  const kept = d.segments.map((s, i) => ({ s, words: segs[i] })).filter((x, i) => i === 0 || x.words.length > 0);
  const out: string[] = [];
  if (d.form === 'pragma') {
    kept.forEach((k, i) => {
      const lead = i === 0 ? swapPragmaLead(k.s.lead, model) : k.s.lead;
      const last = i === kept.length - 1;
      out.push(`${lead}${k.words.join(' ')}${k.s.tail ? ' ' + k.s.tail : ''}${last ? '' : ' \\'}`);
    });
    return out;
  }
  const limit = fixed ? 72 : 132;
  const lines: { lead: string; words: string[]; tail: string }[] = [];
  kept.forEach((k, i) => {
    let lead = swapSentinel(k.s.lead, model);
    if (fixed && i > 0 && lead.length >= 6 && (lead[5] === ' ' || lead[5] === '0')) lead = lead.slice(0, 5) + '&' + lead.slice(6);
    if (!fixed && i > 0 && !/&\s*$/.test(lead)) lead = lead.replace(/(!\$\w+)\s*/, '$1& ');
    if (lead !== '' && !/\s$/.test(lead)) lead += ' ';
    lines.push({ lead, words: k.words, tail: k.s.tail });
  });
  // Wrap lines that would pass the source form's limit (72 columns fixed, 132 free).
  const contLead = (l: string) => (fixed ? l.slice(0, 5) + '& ' : l.replace(/(!\$\w+)(&?)\s*/, '$1& '));
  const wrapped: { lead: string; words: string[]; tail: string }[] = [];
  for (const l of lines) {
    let cur = { lead: l.lead, words: [] as string[], tail: '' };
    for (const w of l.words) {
      const len = cur.lead.length + [...cur.words, w].join(' ').length + 2;
      if (cur.words.length > 0 && len > limit) {
        wrapped.push(cur);
        cur = { lead: contLead(l.lead.startsWith(' ') || fixed ? l.lead : l.lead), words: [], tail: '' };
        if (wrapped.length === 1 && !fixed) cur.lead = contLead(l.lead);
      }
      cur.words.push(w);
    }
    cur.tail = l.tail;
    wrapped.push(cur);
  }
  wrapped.forEach((l, i) => {
    const last = i === wrapped.length - 1;
    out.push(`${l.lead}${l.words.join(' ')}${last || fixed ? '' : ' &'}${l.tail ? ' ' + l.tail.trim() : ''}`);
  });
  return out;
}

function swapPragmaLead(lead: string, model: Model): string {
  return lead.replace(/(acc|omp)(\s*)$/, `${model}$2`).replace(/(acc|omp)$/, `${model} `).replace(/(\S)$/, '$1 ');
}

/** `_OPENACC` ↔ `_OPENMP` guards, the model's header/module and simple device API calls. */
function rewriteGuardsAndApi(lines: string[], language: Language, from: Model, to: Model, plans: Map<number, LinePlan>, plan: (l: number) => LinePlan, notes: TranslateNote[]): number {
  let changed = 0;
  const fortran = language === 'fortran';
  const comments = fortran ? lines.map((l) => /^\s*!/.test(l) || /^[cC*]/.test(l) && false) : cCommentLines(lines);
  const calls: [RegExp, (m: RegExpExecArray) => string][] = from === 'acc'
    ? [
      [/\bacc_get_num_devices\s*\(([^()]*)\)/, () => 'omp_get_num_devices()'],
      [/\bacc_get_device_num\s*\(([^()]*)\)/, () => 'omp_get_default_device()'],
      [/\bacc_set_device_num\s*\(([^(),]*),([^()]*)\)/, (m) => `omp_set_default_device(${m[1].trim()})`],
      [/\bacc_on_device\s*\(\s*acc_device_host\s*\)/, () => 'omp_is_initial_device()'],
      [/\bacc_on_device\s*\(\s*acc_device_(?:not_host|nvidia|default|radeon)\s*\)/, () => '(!omp_is_initial_device())'],
    ]
    : [
      [/\bomp_get_num_devices\s*\(\s*\)/, () => 'acc_get_num_devices(acc_device_default)'],
      [/\bomp_get_default_device\s*\(\s*\)/, () => 'acc_get_device_num(acc_device_default)'],
      [/\bomp_set_default_device\s*\(([^()]*)\)/, (m) => `acc_set_device_num(${m[1].trim()}, acc_device_default)`],
      [/\bomp_is_initial_device\s*\(\s*\)/, () => 'acc_on_device(acc_device_host)'],
    ];
  const isDirective = (l: string) => (fortran ? /^\s*[!cC*]\$(acc|omp)/i.test(l) : /^\s*#/.test(l));
  const current = (i: number) => plans.get(i)?.replace?.[0] ?? lines[i];
  // API calls first, so that whether calls of the old model remain is known for the guards.
  let remaining = false;
  const apiOld = new RegExp(`\\b${from}_\\w+\\s*\\(`);
  lines.forEach((l, i) => {
    if (comments[i] || isDirective(l) || plans.get(i)?.replace === null) return;
    let s = current(i);
    const code = fortran ? s.replace(/!.*$/, '') : s.replace(/\/\/.*$/, '');
    if (!apiOld.test(code) && !/\bomp_lib\b|\bopenacc\b/.test(code)) return;
    let did = false;
    for (const [re, f] of calls) {
      for (let m = re.exec(s); m; m = re.exec(s)) {
        s = s.slice(0, m.index) + f(m) + s.slice(m.index + m[0].length);
        did = true;
      }
    }
    if (fortran) {
      const use = from === 'acc' ? /^(\s*use\s+)openacc\b/i : /^(\s*use\s+)omp_lib\b/i;
      if (use.test(s)) { s = s.replace(use, `$1${to === 'omp' ? 'omp_lib' : 'openacc'}`); did = true; }
    }
    const left = (fortran ? s.replace(/!.*$/, '') : s).match(new RegExp(`\\b${from}_\\w+(?=\\s*\\()`, 'g'));
    if (left) {
      remaining = true;
      notes.push({ line: i, message: `${[...new Set(left)].join(', ')}: no simple ${to === 'omp' ? 'OpenMP' : 'OpenACC'} counterpart (left unchanged)` });
    }
    if (did) { plan(i).replace = [s]; changed++; }
  });
  const fromMacro = from === 'acc' ? '_OPENACC' : '_OPENMP';
  const toMacro = to === 'acc' ? '_OPENACC' : '_OPENMP';
  const fromHeader = from === 'acc' ? 'openacc.h' : 'omp.h';
  const toHeader = to === 'acc' ? 'openacc.h' : 'omp.h';
  // Host OpenMP left in the file keeps its own guards (omp → acc keeps _OPENMP then).
  const hostLeft = from === 'omp' && lines.some((l, i) => /^\s*#\s*pragma\s+omp\b/.test(current(i)) && plans.get(i)?.replace !== null || (fortran && /^\s*!\$omp\b/i.test(current(i))));
  lines.forEach((l, i) => {
    if (comments[i] || !/^\s*#/.test(l)) return;
    let s = current(i);
    if (/^\s*#\s*(if|ifdef|ifndef|elif)\b/.test(s) && new RegExp(`\\b${fromMacro}\\b`).test(s)) {
      if (remaining || hostLeft) {
        notes.push({ line: i, message: `${fromMacro} guard kept: ${from === 'acc' ? 'OpenACC API calls' : 'host OpenMP'} remain in the file` });
        return;
      }
      s = s.replace(new RegExp(`\\b${fromMacro}\\b`, 'g'), toMacro);
      plan(i).replace = [s];
      changed++;
    } else if (new RegExp(`^\\s*#\\s*include\\s*[<"]${fromHeader.replace('.', '\\.')}[>"]`).test(s)) {
      const after = lines.map((_, j) => current(j)).join('\n');
      if (remaining || (from === 'omp' && /\bomp_\w+\s*\(/.test(after.replace(/#\s*include.*$/gm, '')))) {
        // The old header stays for the calls that remain; the new one only when new calls need it.
        if (!new RegExp(`\\b${to}_\\w+\\s*\\(`).test(after)) return;
        plan(i).after.push(s.replace(fromHeader, toHeader));
      } else plan(i).replace = [s.replace(fromHeader, toHeader)];
      changed++;
    }
  });
  return changed;
}

function assemble(lines: string[], eol: string, plans: Map<number, LinePlan>, notes: TranslateNote[], changed: number): TranslateResult {
  const out: string[] = [];
  const edits: TranslateEdit[] = [];
  const keys = [...plans.keys()].sort((a, b) => a - b);
  const newLinesOf = (i: number): string[] => {
    const p = plans.get(i);
    if (!p) return [lines[i]];
    return [...p.before, ...(p.replace === undefined ? [lines[i]] : p.replace ?? []), ...p.after];
  };
  // Where each line of the translation came from (0-based original line), for tools that read
  // positions in the translated text (verify's runtime log) and show them in the original.
  const origin: number[] = [];
  for (let i = 0; i < lines.length; i++) {
    const added = newLinesOf(i);
    out.push(...added);
    for (let j = 0; j < added.length; j++) origin.push(i);
  }
  // One edit per run of consecutive planned lines.
  for (let k = 0; k < keys.length;) {
    const start = keys[k];
    let end = start;
    while (k + 1 < keys.length && keys[k + 1] === end + 1) { k++; end = keys[k]; }
    k++;
    const newLines: string[] = [];
    for (let i = start; i <= end; i++) newLines.push(...newLinesOf(i));
    const same = newLines.length === end - start + 1 && newLines.every((l, j) => l === lines[start + j]);
    if (same) continue;
    if (newLines.length > 0) {
      edits.push({ range: { start: { line: start, character: 0 }, end: { line: end, character: lines[end].length } }, newText: newLines.join(eol) });
    } else if (end + 1 < lines.length) {
      edits.push({ range: { start: { line: start, character: 0 }, end: { line: end + 1, character: 0 } }, newText: '' });
    } else if (start > 0) {
      edits.push({ range: { start: { line: start - 1, character: lines[start - 1].length }, end: { line: end, character: lines[end].length } }, newText: '' });
    } else {
      edits.push({ range: { start: { line: 0, character: 0 }, end: { line: end, character: lines[end].length } }, newText: '' });
    }
  }
  notes.sort((a, b) => a.line - b.line);
  return { text: out.join(eol), edits, notes, changed, lineOrigin: origin };
}
