// The extension manifest and its companions as VS Code reads them: activation, commands,
// settings (every diagnostic code can be given a severity), the `$phasewright` problem matcher
// against real `phasewright check` output, the language configuration's word pattern for
// dotted and dashed names, and the snippets (the machine skeleton must be a clean table).
import { execFileSync } from 'node:child_process';
import { readFileSync } from 'node:fs';
import { join } from 'node:path';
import { describe, expect, it } from 'vitest';
import { analyse } from '../../server/src/core/analysis';
import { catalogue } from '../../server/src/core/checks/catalogue';

const root = join(__dirname, '../..');
const pkg = JSON.parse(readFileSync(join(root, 'package.json'), 'utf8'));
const languageConfiguration = JSON.parse(readFileSync(join(root, 'language-configuration.json'), 'utf8'));
const snippets = JSON.parse(readFileSync(join(root, 'snippets/phasewright.json'), 'utf8'));

describe('manifest', () => {
  it('activates on the language and on its commands only', () => {
    expect(pkg.activationEvents).toEqual(['onLanguage:phasewright', ...pkg.contributes.commands.map((c: { command: string }) => `onCommand:${c.command}`), 'onDebugResolve:phasewright']);
    // The debugger: breakpoints on table lines, and one debugger type whose required attributes are documented.
    expect(pkg.contributes.breakpoints).toEqual([{ language: 'phasewright' }]);
    expect(pkg.contributes.debuggers.map((d: { type: string }) => d.type)).toEqual(['phasewright']);
    expect(pkg.contributes.debuggers[0].configurationAttributes.launch.required).toEqual(['table', 'program']);
    expect(pkg.contributes.commands.map((c: { command: string }) => c.command)).toEqual(['phasewright.newMachine', 'phasewright.buildImages', 'phasewright.showTimingDiagram', 'phasewright.showListing', 'phasewright.runProgram', 'phasewright.showBringUp']);
    expect(pkg.main).toBe('./dist/client.js');
    expect(pkg.engines.vscode).toBe('^1.91.0');
    expect(pkg.devDependencies['@types/vscode']).toBe('1.91.0');
    expect(pkg.capabilities.untrustedWorkspaces).toEqual({ supported: true });
  });

  it('client commands never reuse the server command ids the language client registers itself', () => {
    const server = ['phasewright.build', 'phasewright.listing', 'phasewright.diagram', 'phasewright.summary', 'phasewright.run'];
    for (const c of pkg.contributes.commands) expect(server).not.toContain(c.command);
  });

  it('offers every diagnostic code in phasewright.severity, and only the four levels', () => {
    const severity = pkg.contributes.configuration.properties['phasewright.severity'];
    expect(Object.keys(severity.properties).sort()).toEqual(catalogue.map((c) => c.code).sort());
    for (const p of Object.values(severity.properties) as { enum: string[] }[]) expect(p.enum).toEqual(['error', 'warning', 'info', 'off']);
    expect(severity.additionalProperties.enum).toEqual(['error', 'warning', 'info', 'off']);
  });

  it('declares the settings the client and server read', () => {
    expect(Object.keys(pkg.contributes.configuration.properties).sort()).toEqual(
      ['phasewright.formats', 'phasewright.maxFileSizeKB', 'phasewright.outputFolder', 'phasewright.proofs.enabled', 'phasewright.severity', 'phasewright.trace.server'].sort(),
    );
    expect(pkg.contributes.configuration.properties['phasewright.formats'].items.enum).toEqual(['ihex', 'srec', 'bin', 'memh', 'list']);
    expect(pkg.contributes.configuration.properties['phasewright.proofs.enabled']).toMatchObject({ type: 'boolean', default: true });
  });
});

describe('$phasewright problem matcher', () => {
  const matcher = pkg.contributes.problemMatchers[0];
  const regexp = new RegExp(matcher.pattern.regexp);

  it('reads every diagnostic line of phasewright check, and no note line', () => {
    let output = '';
    try {
      execFileSync(process.execPath, [join(root, 'dist/cli.js'), 'check', '--no-proof', 'examples/faults/bus-contention.pwt', 'examples/faults/unused-name.pwt'], { cwd: root, encoding: 'utf8' });
    } catch (err) {
      output = (err as { stdout: string }).stdout;
    }
    const lines = output.split('\n').filter(Boolean);
    const matched = lines.map((l) => regexp.exec(l)).filter((m): m is RegExpExecArray => !!m);
    const p = matcher.pattern;
    expect(matched.map((m) => `${m[p.file]}:${m[p.line]}:${m[p.column]} ${m[p.severity]} [${m[p.code]}]`)).toEqual([
      'examples/faults/bus-contention.pwt:15:12 error [bus-contention]',
      expect.stringMatching(/^examples\/faults\/unused-name\.pwt:\d+:\d+ warning \[unused-name\]$/),
    ]);
    expect(matched[0][p.message]).toMatch(/^`a\.oe` and `b\.oe` both drive bus `result` in step 0 of class OP; keep one driver\. Caution: /);
    // The related-location notes carry no code and stay out of the Problems panel.
    expect(lines.filter((l) => l.includes(': note: ')).length).toBeGreaterThan(0);
    expect(lines.filter((l) => l.includes(': note: ') && regexp.test(l))).toEqual([]);
  });
});

describe('language configuration', () => {
  const word = new RegExp(`^(?:${languageConfiguration.wordPattern})$`);
  const firstWord = (text: string) => new RegExp(languageConfiguration.wordPattern).exec(text)?.[0];

  it('treats dotted strobe names, dashed class names, numbers and bit patterns as one word', () => {
    for (const w of ['x.rs1.oe', 'OP-IMM', 'MISC-MEM', 'alu.fn', '0x1F', '0b101', '28C64', '1-0', '101']) expect(word.test(w), w).toBe(true);
  });

  it('stops a word at `..`, `->`, `=` and `,`', () => {
    expect(firstWord('lo..hi')).toBe('lo');
    expect(firstWord('pc->left')).toBe('pc');
    expect(firstWord('alu.fn=add')).toBe('alu.fn');
    expect(firstWord('x.rs1.oe, x.rs2.oe')).toBe('x.rs1.oe');
    expect(firstWord('16..19')).toBe('16');
  });

  it('comments with # and pairs the notation\'s brackets', () => {
    expect(languageConfiguration.comments).toEqual({ lineComment: '#' });
    expect(languageConfiguration.brackets).toEqual([
      ['{', '}'],
      ['[', ']'],
      ['(', ')'],
    ]);
  });
});

describe('snippets', () => {
  /** A snippet body with every placeholder at its default, as inserting it and pressing Tab through gives. */
  const expand = (body: string[]) =>
    body
      .join('\n')
      .replace(/\$\{\d+:([^}]*)\}/g, '$1')
      .replace(/\$\{\d+\|([^,|]*)[^}]*\}/g, '$1')
      .replace(/\$\d+/g, '');

  it('the machine skeleton is a table with no diagnostics at all', () => {
    const analysis = analyse(expand(snippets['New machine'].body));
    expect(analysis.diagnostics.map((d) => `${d.code}: ${d.message}`)).toEqual([]);
    expect(analysis.machine.classes.map((c) => c.name)).toEqual(['MISC-MEM']);
  });

  it('a class and a guarded step read as such inside the skeleton', () => {
    const skeleton = expand(snippets['New machine'].body);
    const withClass = `${skeleton}\n${expand(snippets.Class.body).replace('actions', 'pc.inc').replace('LUI opcode=0110011', 'OP opcode=0110011')}`;
    const analysis = analyse(withClass);
    expect(analysis.diagnostics.filter((d) => d.severity === 'error').map((d) => d.code)).toEqual([]);
    expect(analysis.machine.classes.map((c) => c.name)).toEqual(['MISC-MEM', 'OP']);
    expect(expand(snippets['Guarded step'].body)).toBe('3 if taken: actions, done\n3 else: pc.inc, done');
  });
});
