// The workspace folders the client has open (from `initialize`, kept current by
// `workspace/didChangeWorkspaceFolders`), and the rule that confines the editor's build to
// them: a client may name any absolute folder, so the server itself refuses one outside them
// (after following links: a link inside the workspace that leads out does not count as
// inside). With no workspace folder open, the table's own folder is the limit. The client's
// trust prompt is not relied on; other editors have none. It does not write anything.
import * as nodeFs from 'node:fs';
import * as path from 'node:path';
import type { InitializeParams, WorkspaceFoldersChangeEvent } from 'vscode-languageserver';
import { fsPath, nameFromBytes, pathFromFileUri } from '../cli/fsPath';

export class WorkspaceFolders {
  private readonly paths = new Set<string>();

  /** Takes the folders from `initialize`: workspaceFolders, else rootUri, else rootPath. */
  initialize(params: Pick<InitializeParams, 'workspaceFolders' | 'rootUri' | 'rootPath'>): void {
    this.paths.clear();
    const uris = params.workspaceFolders?.map((f) => f.uri) ?? (params.rootUri ? [params.rootUri] : []);
    for (const uri of uris) this.add(pathFromFileUri(uri));
    if (uris.length === 0 && typeof params.rootPath === 'string' && path.isAbsolute(params.rootPath)) this.add(params.rootPath);
  }

  change(event: WorkspaceFoldersChangeEvent): void {
    for (const removed of event.removed) {
      const p = pathFromFileUri(removed.uri);
      if (p) this.paths.delete(path.resolve(p));
    }
    for (const added of event.added) this.add(pathFromFileUri(added.uri));
  }

  list(): string[] {
    return [...this.paths];
  }

  private add(p: string | undefined): void {
    if (p) this.paths.add(path.resolve(p));
  }
}

/** The real path of `target`: its longest existing ancestor with links resolved, then the rest as written. */
function realPathOf(target: string): string {
  const rest: string[] = [];
  let at = path.resolve(target);
  for (;;) {
    try {
      const real = nameFromBytes(nodeFs.realpathSync.native(fsPath(at), { encoding: 'buffer' }));
      return path.join(real, ...rest.reverse());
    } catch {
      const parent = path.dirname(at);
      if (parent === at) return path.resolve(target);
      rest.push(path.basename(at));
      at = parent;
    }
  }
}

function isInside(root: string, candidate: string): boolean {
  const relative = path.relative(root, candidate);
  return relative === '' || (!relative.startsWith('..') && !path.isAbsolute(relative));
}

/**
 * Why `folder` may not receive a build of the table at `tablePath`, or undefined when it may:
 * it must lie inside one of `roots` (the workspace folders), or inside the table's own folder
 * when no workspace folder is open.
 */
export function outsideWorkspace(folder: string, roots: readonly string[], tablePath: string | undefined): string | undefined {
  const limits = roots.length ? roots : tablePath ? [path.dirname(tablePath)] : [];
  if (limits.length === 0) return 'no workspace folder is open and the table is not a file on disk, so there is no folder a build may write into';
  const real = realPathOf(folder);
  if (limits.some((root) => isInside(realPathOf(root), real))) return undefined;
  const where = roots.length ? `the workspace folder${roots.length > 1 ? 's' : ''} (${roots.join(', ')})` : `the table's folder ${limits[0]} (no workspace folder is open)`;
  return `the output folder ${folder} is outside ${where}${real !== path.resolve(folder) ? ` once links are followed (it is ${real})` : ''}; choose a folder inside`;
}
