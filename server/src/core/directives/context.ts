/**
 * The state shared by the pieces of one directive read: the logical body, the base language,
 * and the findings collected so far. Passing one object keeps the parser functions pure
 * (nothing global, nothing thrown) while letting any of them report a problem at an exact range.
 */
import type { Finding, SourceLanguage } from '../types';
import { lowerOutsideQuotes } from './scanner';
import { range, type LogicalDirective } from './source';

export interface ReadCtx {
  src: LogicalDirective;
  language: SourceLanguage;
  /** Fortran is case-insensitive: keywords and names are lower-cased. */
  fortran: boolean;
  /** C++ has the `::` scope operator, whose colons never separate a section or a modifier. */
  cxx: boolean;
  findings: Finding[];
}

/** Records a `directive-syntax` finding over body characters [from, to). */
export function report(ctx: ReadCtx, from: number, to: number, message: string, severity: 'error' | 'warning' = 'error'): void {
  ctx.findings.push({ code: 'directive-syntax', severity, range: range(ctx.src, from, to), message });
}

/** Normalises expression or name text: Fortran lower-cased outside quotes, C kept as written. */
export function norm(ctx: ReadCtx, text: string): string {
  return ctx.fortran ? lowerOutsideQuotes(text) : text;
}

/** Body text of [from, to), trimmed. */
export function slice(ctx: ReadCtx, from: number, to: number): string {
  return ctx.src.body.slice(from, to).trim();
}
