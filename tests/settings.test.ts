/**
 * The one settings schema: package.json's `contributes.configuration` is generated from it,
 * the server validates against it, and bad values fall back to the defaults with a warning.
 */
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { DEFAULT_PROFILE, PRESETS } from '../server/src/core/machine/profiles';
import { FINDING_CODES } from '../server/src/settings/codes';
import { SECTION, SETTINGS, contributedConfiguration } from '../server/src/settings/schema';
import { defaultSettings, readSettings } from '../server/src/settings/validate';

const pkg = JSON.parse(readFileSync(join(__dirname, '..', 'package.json'), 'utf8'));

describe('settings schema and package.json', () => {
  it('package.json contributes exactly the schema (run `npm run manifest` when this fails)', () => {
    expect(pkg.contributes.configuration).toEqual(contributedConfiguration());
  });
  it('every setting has the offloadLedger prefix, a scope and a description (LSP sample: settings share one prefix and declare a scope)', () => {
    for (const [key, spec] of Object.entries(pkg.contributes.configuration.properties) as [string, { scope?: string; markdownDescription?: string }][]) {
      expect(key.startsWith(`${SECTION}.`)).toBe(true);
      expect(spec.scope).toBeTruthy();
      expect(spec.markdownDescription?.length).toBeGreaterThan(20);
    }
  });
  it('the compiler path and the measured profile are machine-scoped (issue 7: the compiler path is a machine setting)', () => {
    expect(SETTINGS['calibrate.compiler'].scope).toBe('machine');
    expect(SETTINGS.measuredHostProfile.scope).toBe('machine');
  });
  it('the profile setting names every preset, allows workspace profiles, and defaults to the core default (core/machine/profiles.ts)', () => {
    for (const name of Object.keys(PRESETS)) expect(SETTINGS.profile.markdownDescription).toContain(`\`${name}\``);
    expect('enum' in SETTINGS.profile).toBe(false);
    expect(SETTINGS.profile.default).toBe(DEFAULT_PROFILE);
  });
  it('severities can be set for every finding code of docs/findings.md', () => {
    const doc = readFileSync(join(__dirname, '..', 'docs', 'findings.md'), 'utf8');
    const documented = [...doc.matchAll(/^\| `([a-z-]+)` \|/gm)].map((m) => m[1]).sort();
    expect([...FINDING_CODES].sort()).toEqual(documented);
    expect(Object.keys(SETTINGS.severity.properties).sort()).toEqual(documented);
  });
  it('inlay hints are off by default and code lenses on (issue 7: inlay hints optional, off by default)', () => {
    expect(defaultSettings()['inlayHints.enabled']).toBe(false);
    expect(defaultSettings()['codeLens.enabled']).toBe(true);
  });
});

describe('reading settings', () => {
  it('no section gives the defaults and no warning', () => {
    expect(readSettings(undefined)).toEqual({ settings: defaultSettings(), warnings: [] });
    expect(readSettings(null).warnings).toEqual([]);
  });
  it('reads nested (VS Code) and flat (dotted) keys alike', () => {
    expect(readSettings({ codeLens: { enabled: false } }).settings['codeLens.enabled']).toBe(false);
    expect(readSettings({ 'inlayHints.enabled': true }).settings['inlayHints.enabled']).toBe(true);
  });
  it('a bad value warns, names the key and falls back to the default', () => {
    const r = readSettings({ profile: 42, debounceMs: -5, baseline: 3 });
    expect(r.settings.profile).toBe(DEFAULT_PROFILE);
    expect(r.settings.debounceMs).toBe(100);
    expect(r.settings.baseline).toBe('auto');
    expect(r.warnings).toHaveLength(3);
    expect(r.warnings[0]).toMatch(/offloadLedger\.profile: .*using the default "pcie4-hbm2e"/);
  });
  it('objects keep their good entries and drop the bad ones, each with a warning', () => {
    const r = readSettings({ sizeBindings: { NX: 600, NY: 'many', '9bad': 3 }, severity: { 'already-present': 'hint', 'no-such-code': 'off', 'stale-on-host': 'loud' } });
    expect(r.settings.sizeBindings).toEqual({ NX: 600 });
    expect(r.settings.severity).toEqual({ 'already-present': 'hint' });
    expect(r.warnings).toHaveLength(4);
  });
  it('accepts the binding names the CLI accepts (`--bind` pattern in server/src/cli/args.ts)', () => {
    expect(readSettings({ sizeBindings: { 'grid%nx': 10, n_1: 2 } }).settings.sizeBindings).toEqual({ 'grid%nx': 10, n_1: 2 });
  });
});
