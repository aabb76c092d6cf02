/**
 * Data clauses read as actions on the data environment, one vocabulary for both standards:
 * OpenACC copy/copyin/copyout/create/present/no_create/delete (§2.7.4–2.7.11, aliases
 * pcopy… already canonical) and OpenMP map types to/from/tofrom/alloc/release/delete with the
 * `always` and `present` modifiers (OpenMP 5.2 §5.8.3). Motion clauses of `update` /
 * `target update` are read separately.
 */
import type { Clause, Directive, VarRef } from '../types';

export type DataAction = 'copy' | 'copyin' | 'copyout' | 'create' | 'present' | 'no_create' | 'delete' | 'deviceptr' | 'release';

export interface DataEntry {
  action: DataAction;
  /** OpenMP `always`: transfer even when the data is already present. */
  always: boolean;
  ref: VarRef;
  clause: Clause;
}

const accActions: Record<string, DataAction> = {
  copy: 'copy', copyin: 'copyin', copyout: 'copyout', create: 'create', present: 'present',
  no_create: 'no_create', delete: 'delete', deviceptr: 'deviceptr', attach: 'present', detach: 'present',
  device_resident: 'create', link: 'present',
};

const ompMapActions: Record<string, DataAction> = {
  to: 'copyin', from: 'copyout', tofrom: 'copy', alloc: 'create', release: 'release', delete: 'delete',
};

export function dataEntries(d: Directive): DataEntry[] {
  const out: DataEntry[] = [];
  for (const c of d.clauses) {
    let action: DataAction | undefined;
    let always = false;
    if (d.family === 'openacc') {
      action = accActions[c.canonical];
    } else if (c.canonical === 'map') {
      const mods = (c.mapModifiers ?? []).map((m) => m.toLowerCase());
      always = mods.includes('always');
      action = mods.includes('present') ? 'present' : ompMapActions[(c.mapType ?? 'tofrom').toLowerCase()];
    } else if (c.canonical === 'is_device_ptr' || c.canonical === 'has_device_addr') {
      action = 'deviceptr';
    } else if (d.construct === 'declare target' && ['to', 'enter', 'link', 'declare target'].includes(c.canonical)) {
      action = 'create';
    }
    if (!action) continue;
    for (const ref of c.vars ?? []) out.push({ action, always, ref, clause: c });
  }
  return out;
}

export interface MotionEntry {
  direction: 'toDevice' | 'toHost';
  ref: VarRef;
  clause: Clause;
}

/** `update self|host|device` (OpenACC §2.14.4) and `target update to|from` (OpenMP 5.2 §5.9 from memory). */
export function motionEntries(d: Directive): MotionEntry[] {
  const out: MotionEntry[] = [];
  for (const c of d.clauses) {
    let direction: MotionEntry['direction'] | undefined;
    if (d.family === 'openacc') {
      if (c.canonical === 'self' || c.canonical === 'host') direction = 'toHost';
      else if (c.canonical === 'device') direction = 'toDevice';
    } else {
      if (c.canonical === 'from') direction = 'toHost';
      else if (c.canonical === 'to') direction = 'toDevice';
    }
    if (!direction) continue;
    for (const ref of c.vars ?? []) out.push({ direction, ref, clause: c });
  }
  return out;
}

/** Variables the construct privatises or reduces: they are never copied. */
export function privateNames(d: Directive): Set<string> {
  const out = new Set<string>();
  for (const c of d.clauses) {
    if (['private', 'firstprivate', 'reduction', 'lastprivate', 'linear'].includes(c.canonical)) {
      for (const v of c.vars ?? []) out.add(v.name);
    }
  }
  return out;
}

/** `default(present)` / `default(none)` on an OpenACC compute construct; `defaultmap` in OpenMP. */
export function defaultMode(d: Directive): 'present' | 'none' | undefined {
  const c = d.clauses.find((x) => x.canonical === 'default');
  const v = c?.value?.toLowerCase();
  if (d.family === 'openacc' && (v === 'present' || v === 'none')) return v;
  const dm = d.clauses.find((x) => x.canonical === 'defaultmap');
  if (dm?.value && /present/i.test(dm.value)) return 'present';
  return undefined;
}
