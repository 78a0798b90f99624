// `phasewright trace`: the bring-up view as text and CSV, read back. Expected values:
//   - registers by the RV32I spec (2.4: ADDI x10,x0,5 gives 5) on tests/programs/debugdemo.S;
//   - chip outputs worked out by hand from the demo's word layout (`word 32 as 4 x 8`): in fetch
//     step 0 the word asserts pc.oe (bit 3, active low), mar.ck (bit 7, active high), alu.oe
//     (bit 12, active low) and alu.fn=passa (14 in bits 16..19); every other active-low strobe
//     sits high, so chip0 = 1000 0011, chip1 = 1100 1110, chip2 = 0000 1110, chip3 = 0.
import { execFileSync, spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { haveTools } from '../support/tools';
import { buildPrograms } from '../programs/build.mjs';

const REPO = join(__dirname, '..', '..');
const CLI = join(REPO, 'dist', 'cli.js');

/** RFC 4180 fields of one line (quotes doubled inside quoted fields). */
function csvFields(line: string): string[] {
  const fields: string[] = [];
  let at = 0;
  while (at <= line.length) {
    if (line[at] === '"') {
      let value = '';
      at++;
      while (at < line.length && !(line[at] === '"' && line[at + 1] !== '"')) value += line[at] === '"' ? (at++, '"') : line[at], at++;
      fields.push(value);
      at += 2;
    } else {
      const end = line.indexOf(',', at) < 0 ? line.length : line.indexOf(',', at);
      fields.push(line.slice(at, end));
      at = end + 1;
    }
  }
  return fields;
}

describe.skipIf(!haveTools(['riscv64-unknown-elf-gcc'], 'gcc-riscv64-unknown-elf'))('phasewright trace', () => {
  let elf = '';
  beforeAll(() => {
    execFileSync(process.execPath, [join(REPO, 'scripts/build.mjs')], { cwd: REPO });
    elf = buildPrograms({ names: ['debugdemo'] })[0].elfPath;
  }, 120_000);

  it('writes the indicators of a range of cycles as text and as CSV that reads back', () => {
    const dir = mkdtempSync(join(tmpdir(), 'pw-trace-'));
    const csvPath = join(dir, 'leds.csv');
    const result = spawnSync(process.execPath, [CLI, 'trace', 'examples/halyard-32.pwt', elf, '--from', '3', '--count', '3', '--csv', csvPath], { cwd: REPO, encoding: 'utf8' });
    expect(result.stderr).toContain('3 cycles');
    expect(result.status).toBe(0);
    expect(result.stdout).toContain('cycle 3  step 0  phase fetch step 0 (class OP-IMM)  (halyard-32.pwt:76)  pc 0x00010004  ir 0x00500513  addi x10,x0,5\n  step counter  000\n');
    expect(result.stdout).toContain('  chip0         1000 0011\n  chip1         1100 1110\n  chip2         0000 1110\n  chip3         0000 0000\n');
    const lines = readFileSync(csvPath, 'utf8').split('\r\n').filter(Boolean);
    const [header, ...rows] = lines.map(csvFields);
    // Indicators the demo declares: the three buses, x1..x31 (leds=992: 31 cards of 32), pc and ir; no LEDs on mar or t.
    expect(header).toEqual(['cycle', 'step', 'label', 'line', 'pc', 'ir', 'step_counter', 'left', 'right', 'result', ...Array.from({ length: 31 }, (_, i) => `x${i + 1}`), 'pc', 'ir', 'chip0', 'chip1', 'chip2', 'chip3']);
    expect(rows.map((r) => r.slice(0, 7))).toEqual([
      ['3', '0', 'phase fetch step 0 (class OP-IMM)', '76', '0x00010004', '0x00500513', '000'],
      ['4', '1', 'phase fetch step 1 (class OP-IMM)', '77', '0x00010004', '0x00500513', '001'],
      // The instruction register loaded addi x11,x0,7 (0x00700593, GNU objdump) at the end of cycle 4.
      ['5', '2', 'class OP-IMM step 2', '116', '0x00010004', '0x00700593', '010'],
    ]);
    const column = (name: string) => header.indexOf(name);
    expect(parseInt(rows[0][column('x10')], 2)).toBe(5);
    // In step 2 of addi x11,x0,7 the ALU puts x0 + 7 on result, before x11 loads it at the edge.
    expect(parseInt(rows[2][column('result')], 2)).toBe(7);
    expect(parseInt(rows[2][column('x11')], 2)).toBe(0);
    expect(rows[0].slice(column('chip0'))).toEqual(['10000011', '11001110', '00001110', '00000000']);
  });

  it('refuses a count out of range', () => {
    const result = spawnSync(process.execPath, [CLI, 'trace', 'examples/halyard-32.pwt', elf, '--count', '0'], { cwd: REPO, encoding: 'utf8' });
    expect(result.status).toBe(2);
    expect(result.stderr).toBe('phasewright trace: --count needs a number of cycles from 1 to 100000\n');
  });
});
