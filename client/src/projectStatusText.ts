/** The words of the project status item (plain data, no VS Code API, so tests read it directly). */
import type { ProjectStatusParams } from '../../server/src/lsp/protocol';

/** What the project item says, as text and tooltip (plain data, so it can be checked without an editor). */
export function projectStatusText(p: ProjectStatusParams): { text: string; tooltip: string } {
  const what =
    'Offload Ledger project index: the C, C++ and Fortran files of the project (sibling files, the sources of ' +
    'compile_commands.json, the files of a workspace check) whose procedures and modules the analysis follows calls into.';
  const files = (n: number): string => `${n} file${n === 1 ? '' : 's'}`;
  if (p.state === 'indexing') {
    const of = `${p.done ?? 0} of ${p.total ?? 0}`;
    const doing = p.scope === 'workspace' ? `Checking the workspace: ${of} files done.` : `Reading the project's files: ${of} ready.`;
    return { text: `$(sync~spin) Indexing ${of} files`, tooltip: `${what}\n\n${doing}` };
  }
  return { text: `$(database) ${files(p.files)}`, tooltip: `${what}\n\nReady: ${files(p.files)} indexed. Click to check the whole workspace.` };
}
