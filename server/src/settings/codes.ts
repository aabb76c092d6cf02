/**
 * The finding codes as a runtime list. The core declares them as a type only; this list is
 * checked against that type at compile time so a new code cannot be forgotten here.
 */
import type { FindingCode, Severity } from '../core/types';

export const FINDING_CODES = [
  'transfer-in-time-loop',
  'implicit-transfer',
  'stale-on-host',
  'stale-on-device',
  'already-present',
  'update-wider-than-needed',
  'exceeds-device-memory',
  'loop-carried-dependence',
  'missing-reduction',
  'unknown-extent',
  'shared-scalar-write',
  'missing-private',
  'inactive-offload-branch',
  'assumed-no-alias',
  'directive-syntax',
] as const satisfies readonly FindingCode[];

// Fails to compile when FindingCode gains a member this list lacks.
type Missing = Exclude<FindingCode, (typeof FINDING_CODES)[number]>;
const complete: [Missing] extends [never] ? true : never = true;
void complete;

export type SeveritySetting = Severity | 'off';
