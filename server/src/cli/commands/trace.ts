// `phasewright trace FILE PROGRAM --from N --count K [--csv OUT.csv] [--no-reference]
// [--load-address ADDR] [--force]`: the bring-up view (core/debug/bringUp.ts) of a range of
// microcycles, for a builder single-stepping the real board: per cycle the step counter, every
// declared indicator (buses and parts with `leds=`) as a bit pattern, and each chip's output
// word. Text on stdout; with --csv, the same rows as CSV written atomically and read back.
// Exit codes: 0 written, 2 usage, file or program errors.
import { basename, dirname, resolve } from 'node:path';
import { mkdirSync } from 'node:fs';
import { bringUpCsv, bringUpRows, bringUpText } from '../../core/debug/bringUp';
import { parseNumber } from '../../core/model/numbers';
import { prepareTable } from '../../core/sim/session';
import { parseArgs } from '../args';
import { defineCommand } from '../help';
import { fsPath } from '../fsPath';
import { inputLimits, readInputFile } from '../inputFile';
import { describeFsError, readSource } from '../readSource';
import { OutputError, writeFileSafely } from '../output/safeWriter';

/** Most cycles one trace shows (each is a block of lines per indicator). */
export const MAX_TRACE_CYCLES = 100_000;

export const traceCommand = defineCommand({
  name: 'trace',
  summary: 'show what the board\'s indicators should show at each microcycle of a range',
  operands: 'FILE PROGRAM',
  options: [
    { name: 'from', value: 'N', help: 'the first cycle (steps from reset; default 0)' },
    { name: 'count', value: 'K', help: 'how many cycles (default 16)' },
    { name: 'csv', value: 'OUT.csv', help: 'also write the rows as CSV' },
    { name: 'no-reference', help: 'do not compare with the RV32I reference while running to the range' },
    { name: 'load-address', value: 'ADDR', help: 'PROGRAM is a raw binary image: load it and start at ADDR' },
    { name: 'force', help: 'trace a table with errors anyway' },
  ],
  details: ['Values are those during each step, after the buses settle and before the closing edge. Only buses and parts that declare `leds=` are shown; a floating bus shows z, an undefined value x.'],
  exitCodes: [
    [0, 'the rows were shown (and written)'],
    [2, 'usage, file or program error, or the CSV could not be written'],
  ],
  async run(args, io) {
    const parsed = parseArgs(args, this.options);
    const fail = (message: string) => {
      io.err(`phasewright trace: ${message}\n`);
      return 2;
    };
    if (parsed.errors.length || parsed.positionals.length !== 2) return fail(`${parsed.errors[0] ?? 'give a .pwt file and a program'}\nusage: phasewright ${this.usage}`);
    const number = (name: string, fallback: number) => {
      const text = parsed.options.get(name);
      if (text === undefined) return fallback;
      return typeof text === 'string' ? parseNumber(text) : undefined;
    };
    const from = number('from', 0);
    const count = number('count', 16);
    if (from === undefined) return fail('--from needs a cycle number, e.g. --from 120');
    if (count === undefined || count < 1 || count > MAX_TRACE_CYCLES) return fail(`--count needs a number of cycles from 1 to ${MAX_TRACE_CYCLES}`);
    const loadText = parsed.options.get('load-address');
    const loadAddress = loadText === undefined ? undefined : typeof loadText === 'string' ? parseNumber(loadText) : undefined;
    if (loadText !== undefined && (loadAddress === undefined || loadAddress > 0xffffffff)) return fail('--load-address needs a 32-bit address, e.g. --load-address 0x10000');
    const [file, programFile] = parsed.positionals;
    const source = readSource(resolve(io.cwd, file), undefined, file);
    if (!source.ok) return fail(source.reason);
    const program = readInputFile(resolve(io.cwd, programFile), inputLimits.program, programFile);
    if (!program.ok) return fail(program.reason);
    const prepared = prepareTable({ text: source.text, sourceName: file, program: program.bytes, loadAddress, force: parsed.options.has('force') });
    if (!prepared.ok) return fail(prepared.reason);
    if (prepared.untrusted) io.err(`phasewright trace: ${prepared.untrusted}\n`);
    const table = bringUpRows(prepared.plan, prepared.program, { from, count, reference: !parsed.options.has('no-reference'), lines: prepared.analysis.lines });
    io.out(bringUpText(table, basename(file)));
    const csv = parsed.options.get('csv');
    if (typeof csv === 'string') {
      const path = resolve(io.cwd, csv);
      try {
        mkdirSync(fsPath(dirname(path)), { recursive: true });
        const written = writeFileSafely(dirname(path), { name: basename(path), bytes: Buffer.from(bringUpCsv(table), 'utf8') });
        io.err(`trace: ${csv} (${table.rows.length} cycles, ${written.sizeBytes} bytes)\n`);
      } catch (err) {
        return fail(err instanceof OutputError ? err.message : `cannot write ${csv}: ${describeFsError(csv, err)}`);
      }
    }
    return 0;
  },
});
