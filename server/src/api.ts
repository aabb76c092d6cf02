/** Programmatic entry for scripts (benchmarks): the same pure core the CLI and server use. */
export { analyzeSource, DEFAULT_CACHE_BYTES } from './core/analyze';
export type { FileAnalysis } from './core/analyze';
export { report } from './core/report';
export { applyLineEdits } from './core/data/edits';
export { loadGrammars } from './grammars';
export { languageOfPath } from './core/language';
export { presetProfile } from './core/machine/profiles';
import { resolveProfiles, type MachinesFile } from './core/machine/resolve';

/** A named profile of a parsed machines file (for scripts; the CLI validates the file first). */
export function profileFromMachines(file: MachinesFile, name: string) {
  return resolveProfiles(file).profiles.get(name);
}
// The planning report (benchmarks render it for generated projects).
export { buildPlanning, hasEstimates } from './lsp/view/planning';
export { renderPlanning } from './planning/render';
// The editor's analysis job (benchmarks time the first and final views of a project file).
export { runJob, modelCacheStats } from './lsp/analysis/job';
// The editing path (tests and benchmarks compare it with whole-file analyses).
export { analyzeEdit, incrementalStats } from './core/incremental';
export { editStats } from './lsp/analysis/job';
export { fileReport } from './core/report';
export { buildView } from './lsp/view/build';
