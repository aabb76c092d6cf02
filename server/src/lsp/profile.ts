/**
 * The machine profile in force: the chosen preset, with its host part replaced by a measured
 * host profile (the JSON `offload-ledger calibrate --out` writes) when the setting names one.
 * A file that is missing or malformed gives a warning and the preset's own host.
 */
import { existsSync, readFileSync } from 'node:fs';
import { InputError } from '../host/files';
import { chooseProfile, readMachinesFile } from '../host/machines';
import { DEFAULT_PROFILE, type HostProfile, type MachineProfile, presetProfile } from '../core/machine/profiles';

export interface ResolvedProfile {
  profile: MachineProfile;
  /** Shown in the status bar and the cards: the preset name, marked when the host was measured. */
  label: string;
  warnings: string[];
}

const HOST_NUMBERS: (keyof HostProfile)[] = ['cores', 'bandwidthNode', 'bandwidthCore', 'peakFlopsNode', 'cacheBytesPerCore', 'memoryBytes'];

/**
 * Accepts a HostProfile, an object holding one under `host` (a whole machine profile), or the
 * machines file `offload-ledger calibrate` writes (its `measured` profile).
 */
export function parseHostProfile(json: unknown): HostProfile | string {
  let obj = typeof json === 'object' && json !== null ? (json as Record<string, unknown>) : undefined;
  const measured = (obj?.profiles as Record<string, unknown> | undefined)?.measured;
  if (typeof measured === 'object' && measured !== null) obj = measured as Record<string, unknown>;
  const host = obj && typeof obj.host === 'object' && obj.host !== null ? (obj.host as Record<string, unknown>) : obj;
  if (!host) return 'not a JSON object';
  const bad = HOST_NUMBERS.filter((k) => typeof host[k] !== 'number' || !Number.isFinite(host[k] as number) || (host[k] as number) <= 0);
  if (bad.length > 0) return `missing or non-positive ${bad.join(', ')}`;
  return {
    name: typeof host.name === 'string' ? host.name : 'measured',
    description: typeof host.description === 'string' ? host.description : 'measured on this machine',
    sources: Array.isArray(host.sources) ? host.sources.filter((x): x is string => typeof x === 'string') : ['offload-ledger calibrate'],
    ...Object.fromEntries(HOST_NUMBERS.map((k) => [k, host[k]])),
    ...(typeof host.peakFlopsNodeSingle === 'number' ? { peakFlopsNodeSingle: host.peakFlopsNodeSingle } : {}),
    ...(typeof host.costPerNodeHour === 'number' ? { costPerNodeHour: host.costPerNodeHour } : {}),
  } as HostProfile;
}

/**
 * `machinesPath`: the workspace's `offload-ledger.machines.json`, when there is one; its profiles
 * are chosen by the same `profile` setting as the presets, and a file with errors gives a
 * warning naming the problem and is ignored.
 */
export function resolveProfile(name: string, measuredHostPath: string, read: (p: string) => string = (p) => readFileSync(p, 'utf8'), machinesPath?: string): ResolvedProfile {
  const warnings: string[] = [];
  let profile = presetProfile(name);
  if (machinesPath && existsSync(machinesPath)) {
    try {
      profile = chooseProfile(readMachinesFile(machinesPath), name);
    } catch (e) {
      if (!profile || !(e instanceof InputError) || !/unknown profile/.test(e.message)) warnings.push(e instanceof Error ? e.message : String(e));
    }
  }
  if (!profile) {
    warnings.push(`offloadLedger.profile: unknown profile ${JSON.stringify(name)}; using ${DEFAULT_PROFILE}`);
    profile = presetProfile(DEFAULT_PROFILE)!;
  }
  if (!measuredHostPath) return { profile, label: profile.name, warnings };
  let parsed: HostProfile | string;
  try {
    parsed = parseHostProfile(JSON.parse(read(measuredHostPath)));
  } catch (e) {
    parsed = e instanceof Error ? e.message : String(e);
  }
  if (typeof parsed === 'string') {
    warnings.push(`offloadLedger.measuredHostProfile: cannot use ${measuredHostPath} (${parsed}); using the host of ${profile.name}`);
    return { profile, label: profile.name, warnings };
  }
  return { profile: { ...profile, host: parsed }, label: `${profile.name} + measured host`, warnings };
}
