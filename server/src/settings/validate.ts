/**
 * Reads the `offloadLedger` section a client sends (`workspace/configuration`) into typed
 * settings. Every key is checked against the schema; a bad value gives a warning naming the key
 * and falls back to the default, so one typo never stops the analysis.
 */
import type { FindingCode } from '../core/types';
import type { Baseline } from '../core/estimate/types';
import { SECTION, SETTINGS, type SettingKey, type SettingSpec, type ValueSchema } from './schema';
import type { SeveritySetting } from './codes';

export interface Settings {
  profile: string;
  baseline: Baseline | 'auto';
  sizeBindings: Record<string, number>;
  preprocessorFlags: string;
  compileCommands: string;
  timeLoopVariables: string;
  severity: Partial<Record<FindingCode, SeveritySetting>>;
  'codeLens.enabled': boolean;
  'inlayHints.enabled': boolean;
  debounceMs: number;
  measuredHostProfile: string;
  'calibrate.compiler': string;
  'trace.server': 'off' | 'messages' | 'verbose';
}

export interface ReadSettings {
  settings: Settings;
  warnings: string[];
}

export function defaultSettings(): Settings {
  const out: Record<string, unknown> = {};
  for (const [key, spec] of Object.entries(SETTINGS) as [string, SettingSpec][]) out[key] = structuredClone(spec.default);
  return out as unknown as Settings;
}

/**
 * `raw` is the section object: VS Code nests dotted keys (`codeLens.enabled` arrives as
 * `{ codeLens: { enabled } }`), while some clients send them flat; both are accepted.
 */
export function readSettings(raw: unknown): ReadSettings {
  const settings = defaultSettings() as unknown as Record<string, unknown>;
  const warnings: string[] = [];
  const section = isObject(raw) ? raw : {};
  for (const [key, spec] of Object.entries(SETTINGS) as [SettingKey, SettingSpec][]) {
    const value = lookup(section, key);
    if (value === undefined || value === null) continue;
    const problems: string[] = [];
    const cleaned = check(value, spec, `${SECTION}.${key}`, problems);
    if (cleaned === INVALID) {
      warnings.push(`${problems.join('; ')}; using the default ${JSON.stringify(spec.default)}`);
      continue;
    }
    warnings.push(...problems.map((p) => `${p}; that entry is ignored`));
    settings[key] = cleaned;
  }
  return { settings: settings as unknown as Settings, warnings };
}

const INVALID = Symbol('invalid');

function lookup(section: Record<string, unknown>, key: string): unknown {
  if (key in section) return section[key];
  let cur: unknown = section;
  for (const part of key.split('.')) {
    if (!isObject(cur)) return undefined;
    cur = cur[part];
  }
  return cur;
}

/** Returns the value to keep (objects lose their bad entries, each reported), or INVALID. */
function check(value: unknown, schema: ValueSchema, name: string, problems: string[]): unknown {
  switch (schema.type) {
    case 'boolean':
      if (typeof value === 'boolean') return value;
      problems.push(`${name}: expected true or false, got ${JSON.stringify(value)}`);
      return INVALID;
    case 'string':
      if (typeof value !== 'string') {
        problems.push(`${name}: expected a string, got ${JSON.stringify(value)}`);
        return INVALID;
      }
      if (schema.enum && !schema.enum.includes(value)) {
        problems.push(`${name}: ${JSON.stringify(value)} is not one of ${schema.enum.join(', ')}`);
        return INVALID;
      }
      return value;
    case 'integer':
      if (typeof value !== 'number' || !Number.isInteger(value)) {
        problems.push(`${name}: expected an integer, got ${JSON.stringify(value)}`);
        return INVALID;
      }
      if ((schema.minimum !== undefined && value < schema.minimum) || (schema.maximum !== undefined && value > schema.maximum)) {
        problems.push(`${name}: ${value} is outside ${schema.minimum ?? '-∞'}..${schema.maximum ?? '∞'}`);
        return INVALID;
      }
      return value;
    case 'object': {
      if (!isObject(value)) {
        problems.push(`${name}: expected an object, got ${JSON.stringify(value)}`);
        return INVALID;
      }
      const out: Record<string, unknown> = {};
      const pattern = schema.propertyNames ? new RegExp(schema.propertyNames.pattern) : undefined;
      for (const [k, v] of Object.entries(value)) {
        const entrySchema = schema.properties?.[k] ?? schema.additionalProperties;
        if (!entrySchema) {
          problems.push(`${name}: unknown key ${JSON.stringify(k)}`);
          continue;
        }
        if (pattern && !pattern.test(k)) {
          problems.push(`${name}: ${JSON.stringify(k)} is not a valid name`);
          continue;
        }
        const inner = check(v, entrySchema, `${name}.${k}`, problems);
        if (inner !== INVALID) out[k] = inner;
      }
      return out;
    }
  }
}

function isObject(v: unknown): v is Record<string, unknown> {
  return typeof v === 'object' && v !== null && !Array.isArray(v);
}
