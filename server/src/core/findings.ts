/**
 * The finding codes with their one-line summaries and default severities, as published in
 * docs/findings.md (a test keeps the two in step). Reports (SARIF rules) and the editor's
 * diagnostics documentation read them from here.
 */
import type { FindingCode, Severity } from './types';

export interface FindingRule {
  code: FindingCode;
  severity: Severity;
  summary: string;
  grounds: string;
}

export const FINDING_RULES: readonly FindingRule[] = [
  { code: 'transfer-in-time-loop', severity: 'warning', summary: 'A data clause or update inside the time loop moves bytes across the link every step (or every K steps).', grounds: 'OpenACC 3.3 §2.7, §2.14.4; OpenMP 5.2 map clause and target update' },
  { code: 'implicit-transfer', severity: 'warning', summary: 'An array named in no data clause and not present is copied by the implicit rules at a compute construct inside the time loop.', grounds: 'OpenACC 3.3 §2.6.2; OpenMP 5.2 §5.8.1' },
  { code: 'stale-on-host', severity: 'error', summary: 'Host code reads array elements the device wrote since the last transfer to the host.', grounds: 'OpenACC 3.3 §2.6, §2.14.4' },
  { code: 'stale-on-device', severity: 'error', summary: 'Device code reads array elements the host wrote since the last transfer to the device.', grounds: 'OpenACC 3.3 §2.6, §2.14.4' },
  { code: 'already-present', severity: 'info', summary: 'A copy clause names data an enclosing region already made present, so it moves nothing.', grounds: 'OpenACC 3.3 §2.7.6–2.7.8; OpenMP reference counts' },
  { code: 'update-wider-than-needed', severity: 'warning', summary: 'An update moves a whole array where host code touches only a slice.', grounds: 'what the analysis measured' },
  { code: 'exceeds-device-memory', severity: 'warning', summary: 'The arrays resident on the device at once exceed the device profile\'s memory.', grounds: 'machine profile' },
  { code: 'loop-carried-dependence', severity: 'error', summary: 'An offloaded loop writes an element another iteration of a parallel dimension reads or writes.', grounds: 'GCD test and Banerjee bounds (Wolfe 1996; Allen & Kennedy 2001)' },
  { code: 'missing-reduction', severity: 'error', summary: 'An offloaded loop accumulates into a scalar that has no reduction clause.', grounds: 'OpenACC 3.3 §2.6.2, §2.5.15; OpenMP 5.2 data-sharing rules' },
  { code: 'unknown-extent', severity: 'info', summary: 'A size or trip count depends on a symbol the tool cannot bind.', grounds: '—' },
  { code: 'shared-scalar-write', severity: 'error', summary: 'An offloaded loop writes a scalar declared outside it that is neither private nor a reduction variable.', grounds: 'OpenMP 5.2 data-sharing attribute rules; OpenACC 3.3 §2.6.2' },
  { code: 'missing-private', severity: 'warning', summary: 'A scalar or local array is used as per-iteration scratch in an offloaded loop without a private clause.', grounds: 'OpenACC 3.3 private clause; OpenMP 5.2 private' },
  { code: 'inactive-offload-branch', severity: 'info', summary: 'A preprocessor branch that holds offload directives is inactive under the current defines.', grounds: 'C11 §6.10.1 conditional inclusion' },
  { code: 'assumed-no-alias', severity: 'info', summary: 'A figure rests on the assumption that two pointers do not alias.', grounds: '—' },
  { code: 'directive-syntax', severity: 'error', summary: 'A directive or clause the tool cannot read.', grounds: 'OpenACC 3.3 / OpenMP 5.2 grammar' },
];
