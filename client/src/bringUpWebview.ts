// The HTML of the bring-up webview: a toolbar (follow the session, or a range chosen by first
// cycle and count) above the board the extension draws (core/diagram/bringUpBoard.ts). The
// page's script only relays choices (a range, a cycle picked in the strip or with the arrow
// keys) and replaces the picture; all drawing happens in the core. Colours come from the
// workbench theme through VS Code's CSS variables (the board is drawn with the `host` palette).

import { webviewHead } from './webviewPage';

/** Messages the page sends to the extension. */
export type FromBringUpPage =
  | { type: 'ready' }
  | { type: 'range'; follow: boolean; from: number; count: number }
  | { type: 'pick'; cycle: number };

/** Messages the extension sends to the page. */
export type ToBringUpPage =
  | { type: 'render'; svg: string; follow: boolean; from: number; count: number; status: string }
  | { type: 'status'; text: string }
  | { type: 'problem'; text: string };

/** Cycles a range may hold (the adapter's own limit). */
export const maxBringUpCount = 256;

export function bringUpHtml(cspSource: string, nonce: string): string {
  return `${webviewHead(cspSource, nonce, 'Bring-up', `  input[type=number] { width: 7em; background: var(--vscode-input-background); color: var(--vscode-input-foreground); border: 1px solid var(--vscode-input-border, transparent); padding: 2px 4px; font-family: var(--vscode-editor-font-family); }
  input:disabled { opacity: .55; }
  #board { margin-top: 10px; overflow-x: auto; outline: none; }
  #board svg { display: block; }`)}
<body>
<div class="bar" role="toolbar" aria-label="Bring-up range">
  <label title="Show the last cycles up to the one the session stands at, and move with every stop"><input type="checkbox" id="follow" checked> follow the session</label>
  <label>from cycle <input type="number" id="from" min="0" step="1" value="0" aria-label="First cycle"></label>
  <label>count <input type="number" id="count" min="1" max="${maxBringUpCount}" step="1" value="16" aria-label="Number of cycles"></label>
  <button id="show">Show</button>
  <span id="status" class="muted"></span>
</div>
<div id="problem" class="problem" hidden></div>
<div id="board" tabindex="0" aria-live="polite" aria-label="Board: pick a cycle in the strip, or move with the left and right arrow keys"></div>
<script nonce="${nonce}">
(function () {
  const vscode = acquireVsCodeApi();
  const $ = (id) => document.getElementById(id);
  const send = (message) => vscode.postMessage(message);
  const whole = (text, least, most) => Math.min(most, Math.max(least, Math.floor(Number(text)) || least));
  function range() {
    const follow = $('follow').checked;
    $('from').disabled = follow;
    send({ type: 'range', follow, from: whole($('from').value, 0, Number.MAX_SAFE_INTEGER), count: whole($('count').value, 1, ${maxBringUpCount}) });
  }
  $('follow').addEventListener('change', range);
  $('show').addEventListener('click', range);
  for (const id of ['from', 'count']) $(id).addEventListener('keydown', (e) => { if (e.key === 'Enter') range(); });
  // A cell of the strip carries its cycle in data-pick.
  $('board').addEventListener('click', (e) => {
    const cell = e.target.closest && e.target.closest('[data-pick]');
    if (cell) send({ type: 'pick', cycle: Number(cell.getAttribute('data-pick')) });
  });
  $('board').addEventListener('keydown', (e) => {
    if (e.key !== 'ArrowLeft' && e.key !== 'ArrowRight') return;
    const svg = $('board').querySelector('svg[data-cycle]');
    if (!svg) return;
    const cycles = [...svg.querySelectorAll('[data-pick]')].map((c) => Number(c.getAttribute('data-pick')));
    const at = cycles.indexOf(Number(svg.getAttribute('data-cycle')));
    const next = cycles[at + (e.key === 'ArrowLeft' ? -1 : 1)];
    if (next !== undefined) send({ type: 'pick', cycle: next });
    e.preventDefault();
  });
  window.addEventListener('message', (event) => {
    const m = event.data;
    if (m.type === 'problem') {
      $('problem').hidden = false;
      $('problem').textContent = m.text;
      return;
    }
    if (m.type === 'status') {
      $('status').textContent = m.text;
      return;
    }
    if (m.type !== 'render') return;
    $('problem').hidden = true;
    $('follow').checked = m.follow;
    $('from').disabled = m.follow;
    $('from').value = String(m.from);
    $('count').value = String(m.count);
    $('status').textContent = m.status;
    // The SVG comes from the extension's own renderer, which escapes every name it draws.
    $('board').innerHTML = m.svg;
  });
  send({ type: 'ready' });
})();
</script>
</body>
</html>`;
}
