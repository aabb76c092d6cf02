/**
 * Macro definitions and their textual expansion (C11 §6.10.3): object-like and function-like
 * macros, `#` stringizing, `##` pasting, `__VA_ARGS__`, nested expansion with rescanning, and a
 * macro never expanding inside its own expansion (§6.10.3.4 ¶2).
 */
import { type Token, tokenize } from './tokens';

export interface MacroDef {
  name: string;
  /** Parameter names of a function-like macro; undefined for an object-like one. */
  params?: string[];
  variadic?: boolean;
  body: string;
  /** 0-based line of the definition in its file, and the file when it is a header. */
  line?: number;
  file?: string;
}

/** Reads the text after `#define`: `NAME body` or `NAME(a, b) body`; undefined when there is no name. */
export function parseDefine(rest: string, line?: number, file?: string): MacroDef | undefined {
  const m = /^\s*([A-Za-z_]\w*)(\(([^)]*)\))?(.*)$/s.exec(rest);
  if (!m) return undefined;
  const body = m[4].trim();
  if (m[2] === undefined) return { name: m[1], body, line, file };
  const raw = m[3].split(',').map((p) => p.trim()).filter((p) => p !== '');
  const variadic = raw.length > 0 && raw[raw.length - 1].endsWith('...');
  const params = raw.map((p) => (p === '...' ? '__VA_ARGS__' : p.replace(/\.\.\.$/, '').trim()));
  return { name: m[1], params, variadic, body, line, file };
}

export interface ExpandOptions {
  /** Expand only identifiers outside parentheses (directive clause lists keep their arguments as written). */
  topLevelOnly?: boolean;
}

export interface Expansion {
  text: string;
  /** True when at least one macro was replaced. */
  changed: boolean;
  /** Names of function-like macros whose argument list never closed. */
  unterminated: string[];
}

const MAX_DEPTH = 64;

export function expandText(text: string, macros: ReadonlyMap<string, MacroDef>, options: ExpandOptions = {}): Expansion {
  const state = { changed: false, unterminated: [] as string[] };
  const out = expandTokens(tokenize(text), macros, new Set(), options, state, 0);
  return { text: out.map((t) => t.text).join(''), changed: state.changed, unterminated: state.unterminated };
}

function expandTokens(
  tokens: Token[],
  macros: ReadonlyMap<string, MacroDef>,
  hidden: ReadonlySet<string>,
  options: ExpandOptions,
  state: { changed: boolean; unterminated: string[] },
  depth: number,
): Token[] {
  const out: Token[] = [];
  let parens = 0;
  for (let i = 0; i < tokens.length; i++) {
    const t = tokens[i];
    if (t.kind === 'punct') {
      if (t.text === '(') parens++;
      else if (t.text === ')') parens = Math.max(0, parens - 1);
    }
    const def = t.kind === 'id' ? macros.get(t.text) : undefined;
    if (!def || hidden.has(t.text) || depth > MAX_DEPTH || (options.topLevelOnly && parens > 0)) {
      out.push(t);
      continue;
    }
    const inner = new Set(hidden).add(def.name);
    if (!def.params) {
      state.changed = true;
      out.push(...expandTokens(tokenize(def.body), macros, inner, options, state, depth + 1));
      continue;
    }
    // A function-like macro name not followed by `(` is an ordinary identifier.
    let j = i + 1;
    while (j < tokens.length && tokens[j].kind === 'space') j++;
    if (j >= tokens.length || tokens[j].text !== '(') {
      out.push(t);
      continue;
    }
    const args = collectArguments(tokens, j);
    if (!args) {
      state.unterminated.push(def.name);
      out.push(...tokens.slice(i));
      break;
    }
    state.changed = true;
    const replaced = substitute(def, args.args, macros, hidden, state, depth);
    out.push(...expandTokens(replaced, macros, inner, options, state, depth + 1));
    i = args.end;
  }
  return out;
}

/** The arguments of a call starting at the `(` at `open`, split at top-level commas; undefined if it never closes. */
function collectArguments(tokens: Token[], open: number): { args: Token[][]; end: number } | undefined {
  const args: Token[][] = [[]];
  let level = 0;
  for (let k = open; k < tokens.length; k++) {
    const t = tokens[k];
    if (t.text === '(') {
      level++;
      if (level === 1) continue;
    } else if (t.text === ')') {
      level--;
      if (level === 0) return { args: args.length === 1 && args[0].every((a) => a.kind === 'space') ? [] : args, end: k };
    } else if (t.text === ',' && level === 1) {
      args.push([]);
      continue;
    }
    args[args.length - 1].push(t);
  }
  return undefined;
}

function trim(tokens: Token[]): Token[] {
  let a = 0;
  let b = tokens.length;
  while (a < b && tokens[a].kind === 'space') a++;
  while (b > a && tokens[b - 1].kind === 'space') b--;
  return tokens.slice(a, b);
}

function substitute(
  def: MacroDef,
  args: Token[][],
  macros: ReadonlyMap<string, MacroDef>,
  hidden: ReadonlySet<string>,
  state: { changed: boolean; unterminated: string[] },
  depth: number,
): Token[] {
  const params = def.params ?? [];
  const raw = new Map<string, Token[]>();
  params.forEach((p, k) => {
    if (p === '__VA_ARGS__' && def.variadic) {
      const rest = args.slice(k);
      raw.set(p, trim(rest.flatMap((a, n) => (n === 0 ? a : [{ kind: 'punct' as const, text: ',' }, ...a]))));
    } else raw.set(p, trim(args[k] ?? []));
  });
  const expanded = new Map<string, Token[]>();
  const fully = (p: string): Token[] => {
    let e = expanded.get(p);
    if (!e) {
      e = expandTokens(raw.get(p) ?? [], macros, hidden, {}, state, depth + 1);
      expanded.set(p, e);
    }
    return e;
  };
  const body = tokenize(def.body);
  const out: Token[] = [];
  const nextNonSpace = (k: number): number => {
    let j = k + 1;
    while (j < body.length && body[j].kind === 'space') j++;
    return j;
  };
  for (let k = 0; k < body.length; k++) {
    const t = body[k];
    if (t.text === '#' && t.kind === 'punct') {
      const j = nextNonSpace(k);
      if (j < body.length && raw.has(body[j].text)) {
        const s = (raw.get(body[j].text) ?? []).map((x) => x.text).join('').replace(/\s+/g, ' ');
        out.push({ kind: 'str', text: JSON.stringify(s) });
        k = j;
        continue;
      }
    }
    if (t.text === '##') {
      // Paste: drop surrounding spaces and join the neighbours into one token text.
      while (out.length > 0 && out[out.length - 1].kind === 'space') out.pop();
      const j = nextNonSpace(k);
      if (j < body.length) {
        const right = raw.has(body[j].text) ? raw.get(body[j].text) ?? [] : [body[j]];
        const left = out.pop();
        const joined = `${left?.text ?? ''}${right[0]?.text ?? ''}`;
        out.push(...tokenize(joined), ...right.slice(1));
        k = j;
      }
      continue;
    }
    if (t.kind === 'id' && raw.has(t.text)) {
      const pasted = body[nextNonSpace(k)]?.text === '##';
      out.push(...(pasted ? raw.get(t.text) ?? [] : fully(t.text)));
      continue;
    }
    out.push(t);
  }
  return out;
}
