/**
 * The machines file of a workspace (`offload-ledger.machines.json`, our own name and schema):
 * found in the working directory or given with --machines, validated with clear messages.
 */
import { existsSync, readFileSync } from 'node:fs';
import { join } from 'node:path';
import Ajv2020 from 'ajv/dist/2020';
import schema from '../../schema/machines.schema.json';
import type { MachineProfile } from '../core/machine/profiles';
import { type MachinesFile, ProfileError, resolveProfiles } from '../core/machine/resolve';
import { InputError } from './files';

export const MACHINES_FILE = 'offload-ledger.machines.json';

export function readMachinesFile(path: string | undefined, cwd = process.cwd()): MachinesFile | undefined {
  const file = path ?? (existsSync(join(cwd, MACHINES_FILE)) ? join(cwd, MACHINES_FILE) : undefined);
  if (!file) return undefined;
  let data: unknown;
  try {
    data = JSON.parse(readFileSync(file, 'utf8'));
  } catch (e) {
    throw new InputError(`${file}: not valid JSON (${e instanceof Error ? e.message : String(e)})`);
  }
  const ajv = new Ajv2020({ allErrors: true, strict: false });
  const validate = ajv.compile(schema);
  if (!validate(data)) {
    // With `oneOf` (a preset name or figures) ajv reports every branch; the deepest error is the useful one.
    const errors = [...(validate.errors ?? [])].sort((a, b) => b.instancePath.split('/').length - a.instancePath.split('/').length);
    const first = errors[0];
    const where = first?.instancePath ? first.instancePath.replace(/^\//, '').replace(/\//g, '.') : '(top level)';
    const extra = first?.params && 'additionalProperty' in first.params ? ` \`${String(first.params.additionalProperty)}\`` : '';
    throw new InputError(`${file}: ${where} ${first?.message ?? 'is invalid'}${extra}`);
  }
  return data as MachinesFile;
}

export function chooseProfile(file: MachinesFile | undefined, name: string | undefined): MachineProfile {
  try {
    const { profiles, defaultName } = resolveProfiles(file);
    const chosen = name ?? defaultName;
    const p = profiles.get(chosen);
    if (!p) throw new ProfileError(`unknown profile \`${chosen}\`; profiles: ${[...profiles.keys()].join(', ')}`);
    return p;
  } catch (e) {
    if (e instanceof ProfileError) throw new InputError(e.message);
    throw e;
  }
}
