// Colours of the timing diagram as CSS custom properties, so one SVG serves a white page, a
// dark page and the editor's own theme. The drawing refers only to `--pw-*` variables; this
// module decides where their values come from. Fills are the stroke colours at low opacity,
// which reads on light and dark backgrounds alike. It is not a general theming system.

export type DiagramTheme = 'light' | 'dark' | 'auto' | 'host';

export const diagramThemes: DiagramTheme[] = ['light', 'dark', 'auto', 'host'];

interface Palette {
  bg: string;
  fg: string;
  muted: string;
  grid: string;
  signal: string;
  bus: string;
  field: string;
  bad: string;
}

/** A neutral palette for white paper: dark ink, one blue for levels, green buses, amber fields. */
const light: Palette = {
  bg: '#fcfcfd',
  fg: '#1d232b',
  muted: '#5f6b7a',
  grid: '#c9d1db',
  signal: '#3358c4',
  bus: '#11805c',
  field: '#a15c00',
  bad: '#c4213a',
};

/** The same roles for a dark page: light ink and lighter hues of the same colours. */
const dark: Palette = {
  bg: '#16191e',
  fg: '#e4e9f0',
  muted: '#9aa5b4',
  grid: '#3a424e',
  signal: '#8aa8ff',
  bus: '#5cd6a8',
  field: '#f0b45a',
  bad: '#ff8a9a',
};

function vars(p: Palette): string {
  return `--pw-bg:${p.bg};--pw-fg:${p.fg};--pw-muted:${p.muted};--pw-grid:${p.grid};--pw-signal:${p.signal};--pw-bus:${p.bus};--pw-field:${p.field};--pw-bad:${p.bad};`;
}

/** In the editor the variables follow the workbench theme (VS Code's webview CSS variables). */
const hostVars =
  '--pw-bg:transparent;' +
  '--pw-fg:var(--vscode-editor-foreground,#1d232b);' +
  '--pw-muted:var(--vscode-descriptionForeground,#5f6b7a);' +
  '--pw-grid:var(--vscode-editorWidget-border,#c9d1db);' +
  '--pw-signal:var(--vscode-charts-blue,#3358c4);' +
  '--pw-bus:var(--vscode-charts-green,#11805c);' +
  '--pw-field:var(--vscode-charts-orange,#a15c00);' +
  '--pw-bad:var(--vscode-charts-red,#c4213a);';

/** The CSS rule(s) that give the `--pw-*` variables their values for a theme. */
export function paletteCss(theme: DiagramTheme, rootClass: string): string {
  switch (theme) {
    case 'light':
      return `.${rootClass}{${vars(light)}}`;
    case 'dark':
      return `.${rootClass}{${vars(dark)}}`;
    case 'auto':
      return `.${rootClass}{${vars(light)}}@media (prefers-color-scheme: dark){.${rootClass}{${vars(dark)}}}`;
    case 'host':
      return `.${rootClass}{${hostVars}}`;
  }
}
