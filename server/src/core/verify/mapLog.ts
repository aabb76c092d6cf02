/**
 * Reads the mapping log that LLVM's OpenMP offload runtime (libomptarget) writes on stderr when
 * `LIBOMPTARGET_INFO=-1` is set. The format is the runtime's, not ours: this reader was written
 * against libomptarget of LLVM 14.0.6 (Debian 12, package libomp-dev 1:14.0-55.7) and takes only
 * the lines it knows; anything else is kept as "other" and never fails the read.
 *
 * Lines used (program built with `-gline-tables-only`, so each construct carries file:line:col):
 *
 *   Libomptarget device 0 info: Entering OpenMP data region at prog.c:123:1 with 4 arguments:
 *   Libomptarget device 0 info: Exiting OpenMP data region at prog.c:123:1 with 4 arguments:
 *   Libomptarget device 0 info: Entering OpenMP kernel at prog.c:125:1 with 3 arguments:
 *   Libomptarget device 0 info: Updating OpenMP data at prog.c:151:1 with 1 arguments:
 *   Libomptarget device 0 info: Copying data from host to device, HstPtr=…, TgtPtr=…, Size=96000, Name=p[0:n]
 *   Libomptarget device 0 info: Copying data from device to host, TgtPtr=…, HstPtr=…, Size=4, Name=p[0:n]
 *   Libomptarget error: … / Libomptarget fatal error 1: …
 *
 * `target enter data` logs as "Entering OpenMP data region", `target exit data` as "Exiting …".
 * A copy belongs to the construct whose header came last: the runtime prints the header before
 * the construct's entry copies and its exit copies before the next header.
 */

export type ConstructKind = 'data-enter' | 'data-exit' | 'kernel' | 'update';

export interface LogConstruct {
  kind: ConstructKind;
  /** The file as the runtime names it (usually the path given to the compiler). */
  file: string;
  /** 1-based line of the directive. */
  line: number;
}

export interface MeasuredConstruct {
  file: string;
  line: number;
  kinds: Set<ConstructKind>;
  executions: number;
  toDevice: number;
  toHost: number;
  /** Bytes by variable and direction. */
  byName: Map<string, { toDevice: number; toHost: number }>;
}

export interface MapLog {
  /** Per construct (file base name + line), in order of first execution. */
  constructs: MeasuredConstruct[];
  /** Copies before any construct header (none are expected). */
  unattributed: { toDevice: number; toHost: number };
  /** Runtime errors and fatal errors, as printed. */
  errors: string[];
  /** The last map entries and copies (shown when a run fails). */
  lastEntries: string[];
  /** Lines that looked like the runtime's but were not understood. */
  unread: number;
}

const HEADER = /^Libomptarget device \d+ info: (Entering OpenMP data region|Exiting OpenMP data region|Entering OpenMP kernel|Updating OpenMP data) at (.+?):(\d+):(\d+)(?: with \d+ arguments?:)?\s*$/;
const COPY = /^Libomptarget device \d+ info: Copying data from (host to device|device to host),.*?\bSize=(\d+)(?:, Name=(.*))?\s*$/;
const ERROR = /^Libomptarget (?:fatal )?error(?: \d+)?:\s*(.*)$/;
const KNOWN = /info: (Creating new map entry|Removing map entry|Mapping exists|OpenMP Host-Device pointer mappings|Host Ptr|0x|[a-z_]+\(.*\)\[\d+\]|Launching kernel|use_address)/;

const KIND: Record<string, ConstructKind> = {
  'Entering OpenMP data region': 'data-enter',
  'Exiting OpenMP data region': 'data-exit',
  'Entering OpenMP kernel': 'kernel',
  'Updating OpenMP data': 'update',
};

/** The variable a runtime name refers to: `u[0:n]` → `u`, `s.data[0:n]` → `s.data`, `unknown` → `unknown`. */
export function baseName(name: string): string {
  const t = name.trim();
  const cut = t.search(/[[(]/);
  return (cut > 0 ? t.slice(0, cut) : t).trim();
}

/** The last path component (the runtime prints the path the compiler was given). */
export function fileBase(p: string): string {
  const parts = p.split(/[\\/]/);
  return parts[parts.length - 1];
}

/**
 * Reads a mapping log line by line, keeping only sums per construct, so a long run's log (millions
 * of lines) costs memory in the number of constructs, not of lines. Never throws.
 */
export class MapLogReader {
  private readonly byKey = new Map<string, MeasuredConstruct>();
  private readonly exits = new Map<string, number>();
  private current: MeasuredConstruct | undefined;
  private readonly log: MapLog = { constructs: [], unattributed: { toDevice: 0, toHost: 0 }, errors: [], lastEntries: [], unread: 0 };

  constructor(private readonly keepLast = 12) {}

  line(raw: string): void {
    const line = raw.trimEnd();
    if (!line.startsWith('Libomptarget')) return;
    const h = HEADER.exec(line);
    if (h) {
      const kind = KIND[h[1]];
      const key = `${fileBase(h[2])}:${h[3]}`;
      let m = this.byKey.get(key);
      if (!m) {
        m = { file: h[2], line: Number(h[3]), kinds: new Set(), executions: 0, toDevice: 0, toHost: 0, byName: new Map() };
        this.byKey.set(key, m);
        this.log.constructs.push(m);
      }
      m.kinds.add(kind);
      if (kind !== 'data-exit') m.executions++;
      else this.exits.set(key, (this.exits.get(key) ?? 0) + 1);
      this.current = m;
      this.remember(line);
      return;
    }
    const c = COPY.exec(line);
    if (c) {
      const direction = c[1] === 'host to device' ? 'toDevice' : 'toHost';
      const bytes = Number(c[2]);
      const m = this.current;
      if (!m) { this.log.unattributed[direction] += bytes; return; }
      m[direction] += bytes;
      const name = baseName(c[3] ?? 'unknown');
      const n = m.byName.get(name) ?? { toDevice: 0, toHost: 0 };
      n[direction] += bytes;
      m.byName.set(name, n);
      this.remember(line);
      return;
    }
    const e = ERROR.exec(line);
    if (e) { this.log.errors.push(e[1]); return; }
    if (/info: (Creating new map entry|Removing map entry)/.test(line)) this.remember(line);
    else if (!KNOWN.test(line)) this.log.unread++;
  }

  /** The sums so far. A structured data region logs an entry and an exit at one line: one
   *  execution; a `target exit data` logs only exits, each an execution. */
  result(): MapLog {
    for (const [k, n] of this.exits) {
      const m = this.byKey.get(k)!;
      if (!m.kinds.has('data-enter')) m.executions = n;
    }
    return this.log;
  }

  private remember(line: string): void {
    this.log.lastEntries.push(line.replace(/^Libomptarget device \d+ info: /, ''));
    if (this.log.lastEntries.length > this.keepLast) this.log.lastEntries.shift();
  }
}

/** Reads a whole mapping log. */
export function readMapLog(text: string): MapLog {
  const r = new MapLogReader();
  for (const l of text.split(/\r?\n/)) r.line(l);
  return r.result();
}
