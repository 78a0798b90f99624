// The standard library, read once: its `kind` declarations parsed and built by the same code as a
// table's own kinds. A problem in it is a defect of the tool (a test keeps it clean), so it is
// kept for that test rather than shown to users.
import { parse } from '../../syntax/parser';
import type { Diagnostic } from '../../text/diagnostic';
import { type KindDef, buildKind } from '../kinds';
import { standardLibraryText } from './standard';

export { standardLibraryName, standardLibraryText } from './standard';

interface Library {
  kinds: Map<string, KindDef>;
  diagnostics: Diagnostic[];
}

let library: Library | undefined;

export function standardLibrary(): Library {
  if (library) return library;
  const parsed = parse(standardLibraryText);
  const diagnostics: Diagnostic[] = [...parsed.errors];
  const kinds = new Map<string, KindDef>();
  for (const decl of parsed.tree.decls) {
    if (decl.kind !== 'kind') {
      diagnostics.push({ code: 'syntax-error', severity: 'error', span: decl.span, message: 'the standard library holds kind declarations only' });
      continue;
    }
    const kind = buildKind(decl, 'library', (d) => diagnostics.push(d));
    if (kind) kinds.set(kind.name, kind);
  }
  library = { kinds, diagnostics };
  return library;
}

/** The standard library's kind named `name`, if any. */
export function libraryKind(name: string): KindDef | undefined {
  return standardLibrary().kinds.get(name);
}
