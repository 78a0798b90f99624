// A plain-text table for command reports: a header row and aligned columns, two spaces in from
// the margin. A column whose cells are all figures (`12`, `3.50`, `5/10`) is right-aligned.

export function textTable(headers: string[], rows: string[][]): string {
  if (rows.length === 0) return '  (none)';
  const widths = headers.map((h, i) => Math.max(h.length, ...rows.map((r) => r[i].length)));
  const numeric = headers.map((_, i) => rows.every((r) => /^[-0-9.?]/.test(r[i]) && !/[a-z]{3}/i.test(r[i].replace(' OVER', ''))));
  const fmt = (cells: string[]) => '  ' + cells.map((c, i) => (numeric[i] && i > 0 ? c.padStart(widths[i]) : c.padEnd(widths[i]))).join('  ').trimEnd();
  return [fmt(headers), ...rows.map(fmt)].join('\n');
}
