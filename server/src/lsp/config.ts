/**
 * Settings per document, asked of the client with `workspace/configuration` (scoped to the
 * document, so folder settings apply) when the client supports it, else the defaults. Answers
 * are cached until the client reports a change. Every warning is logged once, not per request.
 */
import type { Connection } from 'vscode-languageserver';
import { SECTION } from '../settings/schema';
import { defaultSettings, readSettings, type Settings } from '../settings/validate';

export class ConfigStore {
  private readonly cache = new Map<string, Promise<Settings>>();
  private readonly warned = new Set<string>();
  supportsConfiguration = false;
  /** Settings given in initializationOptions, for clients without workspace/configuration. */
  initial: unknown = undefined;

  constructor(private readonly connection: Connection) {}

  forDocument(uri: string | undefined): Promise<Settings> {
    const key = uri ?? '';
    let s = this.cache.get(key);
    if (!s) {
      s = this.fetch(uri);
      this.cache.set(key, s);
    }
    return s;
  }

  invalidate(): void {
    this.cache.clear();
  }

  /** Validates a raw section and logs each new warning. Exposed for didChangeConfiguration pushes. */
  read(raw: unknown): Settings {
    const { settings, warnings } = readSettings(raw);
    for (const w of warnings) this.warn(w);
    return settings;
  }

  warn(message: string): void {
    if (this.warned.has(message)) return;
    this.warned.add(message);
    this.connection.console.warn(`Offload Ledger settings: ${message}`);
  }

  private async fetch(uri: string | undefined): Promise<Settings> {
    if (!this.supportsConfiguration) return this.initial !== undefined ? this.read(this.initial) : defaultSettings();
    try {
      const raw = await this.connection.workspace.getConfiguration({ scopeUri: uri, section: SECTION });
      return this.read(raw ?? this.initial);
    } catch (e) {
      this.warn(`workspace/configuration failed (${e instanceof Error ? e.message : String(e)}); using the defaults`);
      return defaultSettings();
    }
  }
}
