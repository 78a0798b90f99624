// The HTML of the timing-diagram webview: a toolbar (class, one chooser per guard input,
// "all strobes", "Save as SVG…") above the SVG the language server draws. The page's script
// only relays choices to the extension and replaces the picture; all drawing happens in the
// core. Colours come from the workbench theme through VS Code's CSS variables (the SVG is
// drawn with the `host` palette), so light, dark and high-contrast themes all read.

import { webviewHead } from './webviewPage';

/** Messages the page sends to the extension. */
export type FromPage =
  | { type: 'ready' }
  | { type: 'class'; name: string }
  | { type: 'guard'; name: string; bits: string }
  | { type: 'all'; value: boolean }
  | { type: 'loopCount'; value: number }
  | { type: 'save' };

/** Messages the extension sends to the page. */
export type ToPage =
  | {
      type: 'render';
      svg: string;
      className: string;
      classes: string[];
      inputs: { name: string; width: number; bits: string; given: boolean; onAddress: boolean }[];
      instruction?: string;
      all: boolean;
      /** On a machine with a sequencer part: how many times each loop is drawn going round. */
      loopCount?: number;
      errors: number;
      source: string;
    }
  | { type: 'problem'; text: string };

export function timingHtml(cspSource: string, nonce: string): string {
  return `${webviewHead(cspSource, nonce, 'Timing diagram', `  .bar .name { font-family: var(--vscode-editor-font-family); }
  select, input[type=text] { background: var(--vscode-dropdown-background); color: var(--vscode-dropdown-foreground); border: 1px solid var(--vscode-dropdown-border, transparent); padding: 2px 4px; font-family: var(--vscode-editor-font-family); }
  .warn { color: var(--vscode-editorWarning-foreground); }
  #picture { margin-top: 10px; overflow-x: auto; }
  #picture svg { display: block; }`)}
<body>
<div class="bar" role="toolbar" aria-label="Timing diagram choices">
  <label>Class <select id="class" aria-label="Class"></select></label>
  <span id="inputs"></span>
  <label><input type="checkbox" id="all"> all strobes</label>
  <label id="loops" hidden title="How many times each loop goes round before its way out">loop count <input type="number" id="loopCount" min="0" max="64" step="1" style="width: 4em"></label>
  <button id="save" title="Save the picture as a standalone SVG file">Save as SVG…</button>
  <span id="status" class="muted"></span>
</div>
<div id="problem" class="problem" hidden></div>
<div id="picture" aria-live="polite"></div>
<script nonce="${nonce}">
(function () {
  const vscode = acquireVsCodeApi();
  const $ = (id) => document.getElementById(id);
  const send = (message) => vscode.postMessage(message);
  $('class').addEventListener('change', (e) => send({ type: 'class', name: e.target.value }));
  $('all').addEventListener('change', (e) => send({ type: 'all', value: e.target.checked }));
  $('loopCount').addEventListener('change', (e) => {
    const n = Math.round(Number(e.target.value));
    if (Number.isFinite(n) && n >= 0 && n <= 64) send({ type: 'loopCount', value: n });
  });
  $('save').addEventListener('click', () => send({ type: 'save' }));

  function option(value, label, selected) {
    const o = document.createElement('option');
    o.value = value;
    o.textContent = label;
    o.selected = selected;
    return o;
  }

  function inputControl(input) {
    const label = document.createElement('label');
    const name = document.createElement('span');
    name.className = 'name';
    name.textContent = input.name + ' =';
    label.appendChild(name);
    let control;
    if (input.width <= 4) {
      control = document.createElement('select');
      for (let v = 0; v < 2 ** input.width; v++) {
        const bits = v.toString(2).padStart(input.width, '0');
        control.appendChild(option(bits, bits, bits === input.bits));
      }
    } else {
      control = document.createElement('input');
      control.type = 'text';
      control.size = input.width + 1;
      control.value = input.bits;
    }
    control.setAttribute('aria-label', input.name);
    control.dataset.input = input.name;
    control.addEventListener('change', () => send({ type: 'guard', name: input.name, bits: control.value.trim() }));
    label.appendChild(control);
    if (!input.onAddress) {
      const warn = document.createElement('span');
      warn.className = 'warn';
      warn.textContent = '(not on the address lines)';
      label.appendChild(warn);
    }
    return label;
  }

  window.addEventListener('message', (event) => {
    const m = event.data;
    if (m.type === 'problem') {
      $('problem').hidden = false;
      $('problem').textContent = m.text;
      return;
    }
    if (m.type !== 'render') return;
    $('problem').hidden = true;
    const select = $('class');
    select.replaceChildren(...m.classes.map((c) => option(c, c, c === m.className)));
    $('inputs').replaceChildren(...m.inputs.map(inputControl));
    $('all').checked = m.all;
    $('loops').hidden = m.loopCount === undefined;
    if (m.loopCount !== undefined) $('loopCount').value = String(m.loopCount);
    const parts = [m.source];
    if (m.instruction) parts.push('instruction ' + m.instruction);
    if (m.errors) parts.push(m.errors + ' error' + (m.errors > 1 ? 's' : '') + ' in the table');
    $('status').textContent = parts.join(' · ');
    // The SVG comes from the extension's own renderer, which escapes every name it draws.
    $('picture').innerHTML = m.svg;
    vscode.setState({ className: m.className });
  });
  send({ type: 'ready' });
})();
</script>
</body>
</html>`;
}
