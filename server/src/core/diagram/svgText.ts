// The pieces of SVG text both drawings (the timing diagram and the bring-up board) are made of:
// escaping, rounded coordinates, and text in one monospace font whose width is known by the
// character count, so every column can be laid out wide enough without a DOM to measure in.

export const font = 'ui-monospace, "DejaVu Sans Mono", "Cascadia Mono", Menlo, Consolas, monospace';
/** Font sizes in px. */
export const size = { title: 15, text: 12, small: 10.5 };
/** The advance width of one monospace character (0.6 em plus a margin). */
export const advance = (px: number) => px * 0.62;
export const textWidth = (text: string, px: number = size.text) => Math.ceil(text.length * advance(px));

export function esc(text: string): string {
  return text.replace(/&/g, '&amp;').replace(/</g, '&lt;').replace(/>/g, '&gt;').replace(/"/g, '&quot;');
}

export function num(value: number): string {
  return String(Math.round(value * 10) / 10);
}

export interface TextOptions {
  cls?: string;
  px?: number;
  anchor?: 'start' | 'middle' | 'end';
  weight?: 'bold';
  attrs?: string;
}

export function text(x: number, y: number, content: string, o: TextOptions = {}): string {
  const attrs = [`x="${num(x)}"`, `y="${num(y)}"`];
  if (o.cls) attrs.push(`class="${o.cls}"`);
  // Inline style, because the stylesheet's font size would win over a presentation attribute.
  const style: string[] = [];
  if (o.px && o.px !== size.text) style.push(`font-size:${o.px}px`);
  if (o.weight) style.push(`font-weight:${o.weight}`);
  if (style.length) attrs.push(`style="${style.join(';')}"`);
  if (o.anchor && o.anchor !== 'start') attrs.push(`text-anchor="${o.anchor}"`);
  if (o.attrs) attrs.push(o.attrs);
  return `<text ${attrs.join(' ')}>${esc(content)}</text>`;
}
