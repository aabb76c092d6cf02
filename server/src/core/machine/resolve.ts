/**
 * Turns a machines file (already parsed and validated against machines.schema.json) into
 * machine profiles: each named profile starts from a preset and replaces its parts by preset
 * names or by its own figures. Unknown preset names are errors with the list of valid ones.
 */
import { DEFAULT_PROFILE, DEVICES, HOSTS, LINKS, type MachineProfile, PRESETS, presetProfile } from './profiles';

export interface MachinesFile {
  default?: string;
  profiles?: Record<string, {
    preset?: string;
    description?: string;
    host?: string | Record<string, unknown>;
    device?: string | Record<string, unknown>;
    link?: string | Record<string, unknown>;
  }>;
}

export class ProfileError extends Error {}

function part<T extends { name: string }>(kind: string, base: T, given: string | Record<string, unknown> | undefined, table: Record<string, T>, profile: string): T {
  if (given === undefined) return base;
  if (typeof given === 'string') {
    const found = table[given];
    if (!found) throw new ProfileError(`profile \`${profile}\`: unknown ${kind} \`${given}\`; built-in ${kind}s: ${Object.keys(table).join(', ')}`);
    return found;
  }
  return { ...base, ...given, name: (given.name as string | undefined) ?? `${profile}-${kind}` } as T;
}

/** All profiles: built-in presets plus the file's own, and the name of the default. */
export function resolveProfiles(file: MachinesFile | undefined): { profiles: Map<string, MachineProfile>; defaultName: string } {
  const profiles = new Map<string, MachineProfile>();
  for (const name of Object.keys(PRESETS)) profiles.set(name, presetProfile(name)!);
  for (const [name, spec] of Object.entries(file?.profiles ?? {})) {
    const presetName = spec.preset ?? DEFAULT_PROFILE;
    const base = presetProfile(presetName);
    if (!base) throw new ProfileError(`profile \`${name}\`: unknown preset \`${presetName}\`; presets: ${Object.keys(PRESETS).join(', ')}`);
    profiles.set(name, {
      name,
      host: part('host', base.host, spec.host, HOSTS, name),
      device: part('device', base.device, spec.device, DEVICES, name),
      link: part('link', base.link, spec.link, LINKS, name),
    });
  }
  const defaultName = file?.default ?? DEFAULT_PROFILE;
  if (!profiles.has(defaultName)) throw new ProfileError(`default profile \`${defaultName}\` is not defined; profiles: ${[...profiles.keys()].join(', ')}`);
  return { profiles, defaultName };
}
