/**
 * What the model could not read, and what that does to the figures: no figure that rests on
 * something unread is shown without saying so. Three kinds, per loop nest:
 *  - a subscript that is not affine in the loop variables (indirect `u[idx[i]]`, non-linear
 *    `u[i*i]`, or text the front end could not read): the access is counted as one element of
 *    its own per iteration (no reuse), and no dependence test can decide it;
 *  - a call in floating-point context that the flop table does not know: it counts 0 flops, so
 *    the loop's flops and intensity are a lower bound;
 *  - a loop whose trip count cannot be read from its header: the nest's iterations stay symbolic.
 */
import type { NestReport } from '../analyze';
import { accessesOfStatement, walkStatements } from '../model/values';

export interface NotUnderstood {
  /** 1-based line of what was not read. */
  line: number;
  /** 1-based line of the loop nest whose figures rest on it. */
  nestLine: number;
  kind: 'subscript' | 'call' | 'trip-count';
  /** What was not read, as written. */
  what: string;
  /** What it does to the figures. */
  effect: string;
}

/**
 * What the walk of one nest's statements finds (unread trip counts and subscripts), kept per nest
 * report: an edit re-analysed by parts keeps the reports of the nests it did not touch, so only
 * the touched nests are walked again.
 */
const walked = new WeakMap<NestReport, { fortran: boolean; list: NotUnderstood[] }>();
function walkedOf(r: NestReport, fortran: boolean): NotUnderstood[] {
  const hit = walked.get(r);
  if (hit && hit.fortran === fortran) return hit.list;
  const list: NotUnderstood[] = [];
  const nestLine = r.nest.root.keywordRange.start.line + 1;
  const vars = new Set(r.nest.variables);
  walkStatements([r.nest.root], (s) => {
    if (s.kind === 'loop' && s !== r.nest.root && !s.tripCount && !s.implied) {
      list.push({ line: s.keywordRange.start.line + 1, nestLine, kind: 'trip-count', what: s.header.trim(), effect: 'its trip count cannot be read from the header, so the iterations of this nest stay symbolic' });
    }
    for (const a of accessesOfStatement(s)) {
      if (a.subscripts.length > 0 && a.subscripts.every((x) => !!x)) continue;
      const text = fortran ? `${a.array}(${a.subscriptText.join(', ')})` : `${a.array}[${a.subscriptText.join('][')}]`;
      list.push({
        line: a.range.start.line + 1, nestLine, kind: 'subscript', what: text,
        effect: `the subscript is not affine in ${[...vars].map((v) => `\`${v}\``).join(', ') || 'the loop variables'}: counted as one element of its own per iteration (no reuse), and no dependence test decides it`,
      });
    }
    return undefined;
  });
  walked.set(r, { fortran, list });
  return list;
}

export function notUnderstood(nests: readonly NestReport[], fortran: boolean): NotUnderstood[] {
  const out: NotUnderstood[] = [];
  const seen = new Set<string>();
  // The subscripts already said per nest line (an irregular footprint is not said twice).
  const subscriptsAt = new Map<number, string[]>();
  const push = (x: NotUnderstood): void => {
    const key = `${x.kind}:${x.line}:${x.what}`;
    if (seen.has(key)) return;
    seen.add(key);
    out.push(x);
    if (x.kind === 'subscript') {
      const list = subscriptsAt.get(x.nestLine);
      if (list) list.push(x.what);
      else subscriptsAt.set(x.nestLine, [x.what]);
    }
  };
  for (const r of nests) {
    const nestLine = r.nest.root.keywordRange.start.line + 1;
    for (const x of walkedOf(r, fortran)) push(x);
    for (const fp of r.cost.footprints) {
      if (!fp.irregular) continue;
      if ((subscriptsAt.get(nestLine) ?? []).some((w) => w.startsWith(`${fp.array}${fortran ? '(' : '['}`))) continue;
      push({ line: nestLine, nestLine, kind: 'subscript', what: `\`${fp.array}\` subscripts`, effect: 'not affine in the loop variables: counted as one element of their own per iteration (no reuse), and no dependence test decides them' });
    }
    for (const c of new Set(r.cost.unknownCalls)) {
      push({ line: nestLine, nestLine, kind: 'call', what: `${c}(…)`, effect: 'a call the flop table does not know counts 0 flops: the flops and intensity of this loop are a lower bound' });
    }
  }
  return out.sort((a, b) => a.line - b.line || a.what.localeCompare(b.what));
}
