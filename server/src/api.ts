/** Programmatic entry for scripts (benchmarks): the same pure core the CLI and server use. */
export { analyzeSource, DEFAULT_CACHE_BYTES } from './core/analyze';
export type { FileAnalysis } from './core/analyze';
export { report } from './core/report';
export { applyLineEdits } from './core/data/edits';
export { loadGrammars } from './grammars';
export { languageOfPath } from './core/language';
