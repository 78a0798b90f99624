// The language server's `phasewright.run` handler (server/src/lsp/runCommand.ts) called
// directly with a stand-in context: the answer carries the summary and the program's output, and
// on a divergence the table uri with the range of the step line to jump to. Arguments from
// outside are checked.
import { mkdirSync, rmSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { pathToFileURL } from 'node:url';
import { beforeAll, describe, expect, it } from 'vitest';
import { analyse } from '../../server/src/core/analysis';
import { runCommandId, runProgram, registerRunCommand } from '../../server/src/lsp/runCommand';
import { REPO, demoWith, exitWords, ins } from './support';

const dir = join(REPO, 'tests', '.tmp', 'sim-lsp');
const swapped = demoWith('100 0 xor   101 0 srl   101 1 sra   110 0 or ', '100 0 or    101 0 srl   101 1 sra   110 0 xor');
const tableUri = pathToFileURL(join(dir, 'swapped.pwt')).href;
const context = (open?: string) => ({
  analysisOf: (uri: string) => (open !== undefined && uri === tableUri ? analyse(open) : undefined),
  token: { isCancellationRequested: false, onCancellationRequested: () => ({ dispose() {} }) },
});

function rawImage(words: number[]): Buffer {
  const bytes = Buffer.alloc(words.length * 4);
  words.forEach((w, i) => bytes.writeUInt32LE(w >>> 0, i * 4));
  return bytes;
}

beforeAll(() => {
  rmSync(dir, { recursive: true, force: true });
  mkdirSync(dir, { recursive: true });
  writeFileSync(join(dir, 'swapped.pwt'), swapped);
  writeFileSync(join(dir, 'xor.bin'), rawImage([ins('addi', { rd: 5, rs1: 0, imm: 3 }), ins('xor', { rd: 10, rs1: 5, rs2: 5 }), ...exitWords()]));
  writeFileSync(join(dir, 'add.bin'), rawImage([ins('addi', { rd: 5, rs1: 0, imm: 3 }), ins('add', { rd: 10, rs1: 5, rs2: 5 }), ...exitWords()]));
});

describe('phasewright.run in the language server', () => {
  it('registers under its id', () => {
    const ids: string[] = [];
    registerRunCommand((id) => ids.push(id));
    expect(ids).toEqual([runCommandId]);
    expect(runCommandId).toBe('phasewright.run');
  });

  it('runs a program beside the table (relative path) and answers with the exit code and summary', async () => {
    const answer = await runProgram([{ uri: tableUri, program: 'add.bin', loadAddress: 0x10000 }], context());
    if (!answer.ok) throw new Error(answer.reason);
    expect(answer.exitCode).toBe(6);
    expect(answer.ending).toBe('program exited with code 6');
    expect(answer.instructions).toBe(4);
    expect(answer.summary).toContain('instructions retired: 4');
    expect(answer.problem).toBeUndefined();
  });

  it('on a divergence, points at the step line of the open (unsaved) text', async () => {
    // The open text has two extra comment lines at the top, so its line numbers differ from the file's.
    const open = `# unsaved edit\n# another\n${swapped}`;
    const answer = await runProgram([{ uri: tableUri, program: join(dir, 'xor.bin'), loadAddress: 0x10000 }], context(open));
    if (!answer.ok) throw new Error(answer.reason);
    expect(answer.exitCode).toBe(3);
    expect(answer.problem?.kind).toBe('divergence');
    expect(answer.problem?.uri).toBe(tableUri);
    const stepLine = open.split('\n').findIndex((l) => l.includes('2: x.rs1.oe, x.rs2.oe, alu.fn=op_fn'));
    expect(answer.problem?.range.start).toEqual({ line: stepLine, character: 2 });
    expect(answer.problem?.message).toContain('x10: expected 0x00000000 (reference), got 0x00000003 (table)');
    expect(answer.problem?.report).toContain('steps of this instruction');
  });

  it('takes the [uri, programPath] form too (ELF or not: a raw image needs the object form for its address)', async () => {
    const answer = await runProgram([tableUri, join(dir, 'xor.bin')], context());
    expect(answer).toEqual({ ok: false, reason: expect.stringContaining('not an ELF file') });
  });

  it('refuses bad arguments with a reason', async () => {
    const cases: [unknown[], string][] = [
      [[], 'needs { uri, program }'],
      [[{ uri: tableUri }], 'no "program" path'],
      [[{ uri: tableUri, program: 'add.bin', loadAddress: -1 }], '"loadAddress" must be a 32-bit unsigned integer'],
      [[{ uri: tableUri, program: 'add.bin', maxSteps: 0 }], '"maxSteps" must be a positive integer'],
      [[{ uri: tableUri, program: 'missing.bin' }], 'cannot read the program'],
      [[{ uri: 'untitled:Untitled-1', program: 'add.bin' }], 'not open in the editor and its uri is not a file'],
    ];
    for (const [args, reason] of cases) {
      const answer = await runProgram(args, context());
      expect(answer, JSON.stringify(args)).toEqual({ ok: false, reason: expect.stringContaining(reason) });
    }
  });
});
