// The part every Phasewright webview page shares: the content security policy (only the page's
// own nonce-marked script runs, nothing is loaded from outside), and the styles of the body and
// the sticky toolbar, all from the workbench theme's CSS variables so every theme reads.

/** The document head up to and including the shared styles; the page adds its own rules in `css`. */
export function webviewHead(cspSource: string, nonce: string, title: string, css: string): string {
  return `<!DOCTYPE html>
<html lang="en">
<head>
<meta charset="UTF-8">
<meta http-equiv="Content-Security-Policy" content="default-src 'none'; img-src ${cspSource} data:; style-src ${cspSource} 'unsafe-inline'; script-src 'nonce-${nonce}';">
<meta name="viewport" content="width=device-width, initial-scale=1.0">
<title>${title}</title>
<style>
  body { padding: 0 12px 16px; color: var(--vscode-foreground); font-family: var(--vscode-font-family); font-size: var(--vscode-font-size); }
  .bar { position: sticky; top: 0; z-index: 1; display: flex; flex-wrap: wrap; gap: 6px 14px; align-items: center; padding: 8px 0; background: var(--vscode-editor-background); border-bottom: 1px solid var(--vscode-editorWidget-border, transparent); }
  .bar label { display: inline-flex; gap: 5px; align-items: center; }
  button { background: var(--vscode-button-background); color: var(--vscode-button-foreground); border: none; padding: 4px 10px; cursor: pointer; }
  button:hover { background: var(--vscode-button-hoverBackground); }
  .muted { color: var(--vscode-descriptionForeground); }
  .problem { color: var(--vscode-errorForeground); margin: 8px 0; }
${css}
</style>
</head>`;
}
