/**
 * Element types and their storage sizes. Sizes follow the common LP64 data model of Linux
 * HPC systems (common practice): int 4, long 8, float 4, double 8, complex float 8,
 * complex double 16. Fortran kinds map through `fortranKind` in the Fortran front end.
 */
import type { ElementType } from './program';

const t = (name: string, bytes: number, isFloat: boolean): ElementType => ({ name, bytes, isFloat });

export const ElementTypes = {
  float: t('float', 4, true),
  double: t('double', 8, true),
  longDouble: t('long double', 16, true),
  complexFloat: t('complex-float', 8, true),
  complexDouble: t('complex-double', 16, true),
  int: t('int', 4, false),
  long: t('long', 8, false),
  short: t('short', 2, false),
  char: t('char', 1, false),
  bool: t('bool', 1, false),
  unknown: t('unknown', 8, false),
} as const;

/**
 * Reads a C/C++ type spelling (`const double`, `unsigned long long`, `float _Complex`,
 * `size_t`, `std::complex<double>`) into an element type. Unknown names give `unknown`
 * with 8 bytes so that byte counts stay conservative rather than zero.
 */
export function elementTypeFromC(spelling: string): ElementType {
  const words = spelling
    .replace(/\b(const|volatile|static|extern|register|restrict|__restrict__|__restrict|inline|unsigned|signed|struct)\b/g, ' ')
    .replace(/\s+/g, ' ')
    .trim();
  const complex = /\b(_Complex|complex)\b|std::complex/.test(words);
  if (/\blong double\b/.test(words)) return complex ? t('complex-long-double', 32, true) : ElementTypes.longDouble;
  if (/\bdouble\b/.test(words)) return complex ? ElementTypes.complexDouble : ElementTypes.double;
  if (/\bfloat\b/.test(words)) return complex ? ElementTypes.complexFloat : ElementTypes.float;
  if (/\b(long long|long|size_t|ptrdiff_t|ssize_t|int64_t|uint64_t|intptr_t|uintptr_t)\b/.test(words)) return ElementTypes.long;
  if (/\b(short|int16_t|uint16_t)\b/.test(words)) return ElementTypes.short;
  if (/\b(char|int8_t|uint8_t)\b/.test(words)) return ElementTypes.char;
  if (/\b(bool|_Bool)\b/.test(words)) return ElementTypes.bool;
  if (/\b(int|int32_t|uint32_t|unsigned)\b/.test(words) || words === '') return ElementTypes.int;
  return ElementTypes.unknown;
}
