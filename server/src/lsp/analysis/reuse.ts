/**
 * Reuse of a document's last analysis: a job whose inputs equal those of the job that produced
 * the last view (same text, same settings and flags, same texts of the project files it reads)
 * is answered from that view with the new version number, without the analysis thread. Texts
 * are compared as strings (an unchanged document or file usually hands over the very same
 * string, which compares at once); everything else as JSON.
 */
import type { DocumentView } from '../view/types';
import type { AnalysisJob } from './job';

/** Every input of a job except the texts and the version, as one comparable string. */
function settingsKey(job: AnalysisJob): string {
  return JSON.stringify([
    job.uri, job.path, job.language, job.bindings, job.preprocess ?? null, job.profile ?? null, job.baseline, job.timeLoopVariables ?? null, job.view, job.root ?? null,
    (job.neighbours ?? []).map((n) => [n.path, n.language, n.preprocess ?? null]),
  ]);
}

export function sameInputs(a: AnalysisJob, b: AnalysisJob): boolean {
  if (a.text !== b.text) return false;
  const na = a.neighbours ?? [];
  const nb = b.neighbours ?? [];
  if (na.length !== nb.length) return false;
  for (let k = 0; k < na.length; k++) if (na[k].path !== nb[k].path || na[k].text !== nb[k].text) return false;
  return settingsKey(a) === settingsKey(b);
}

/** The last job and view per document (or per file of a workspace check). */
export class ViewCache {
  private readonly entries = new Map<string, { job: AnalysisJob; view: DocumentView }>();
  hits = 0;

  constructor(private readonly max = 256) {}

  /** The cached view for the job's inputs, re-versioned, or undefined. */
  lookup(job: AnalysisJob): DocumentView | undefined {
    const e = this.entries.get(job.uri);
    if (!e || !sameInputs(e.job, job)) return undefined;
    this.hits++;
    return e.view.version === job.version ? e.view : { ...e.view, version: job.version };
  }

  store(job: AnalysisJob, view: DocumentView): void {
    this.entries.delete(job.uri);
    if (this.entries.size >= this.max) this.entries.delete(this.entries.keys().next().value!);
    this.entries.set(job.uri, { job, view });
  }

  delete(uri: string): void {
    this.entries.delete(uri);
  }

  clear(): void {
    this.entries.clear();
  }
}
