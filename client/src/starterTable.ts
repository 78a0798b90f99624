// The starter table the "New machine" command writes: the "New machine" snippet with every
// placeholder at its default, so the snippet (snippets/phasewright.json) stays the one place
// that says what a new machine looks like. Also the check of the file name the user types.
// Pure: no vscode import, so tests read it directly.

export const starterSnippetName = 'New machine';

/** Resolves a snippet body: `${1:text}` becomes `text`, `$1` and `$0` become nothing. */
export function expandSnippet(body: readonly string[]): string {
  return body
    .join('\n')
    .replace(/\$\{\d+:([^}]*)\}/g, '$1')
    .replace(/\$\{\d+\}|\$\d+/g, '')
    .replace(/\n*$/, '\n');
}

/** The starter table from the snippets file's JSON text; undefined when the snippet is missing. */
export function starterTable(snippetsJson: string): string | undefined {
  let data: unknown;
  try {
    data = JSON.parse(snippetsJson);
  } catch {
    return undefined;
  }
  const body = (data as Record<string, { body?: unknown }> | null)?.[starterSnippetName]?.body;
  if (!Array.isArray(body) || !body.every((line) => typeof line === 'string')) return undefined;
  return expandSnippet(body);
}

/**
 * The file name for a new table as typed: `.pwt` added when missing; an error for names with a
 * folder part, that are empty, or that cannot be file names.
 */
export function tableFileName(typed: string): { ok: true; name: string } | { ok: false; reason: string } {
  const name = typed.trim();
  if (!name) return { ok: false, reason: 'type a file name, e.g. my-machine.pwt' };
  if (/[\\/]/.test(name) || name === '.' || name === '..') return { ok: false, reason: 'a name only, without folders: the file goes into the workspace folder' };
  if (/[\u0000-\u001f<>:"|?*]/.test(name)) return { ok: false, reason: 'use letters, digits, dots, dashes and underscores' };
  return { ok: true, name: /\.pwt$/i.test(name) ? name : `${name}.pwt` };
}
