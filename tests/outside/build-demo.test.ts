// The demo machine's real build output, checked by outside tools: npm nrf-intel-hex reads
// every HEX file to exactly our binary; Debian srecord converts our HEX and S-record files to
// identical binaries (srec_cmp) and splits a whole 32-bit image into the same byte lanes as our
// chip files; Icarus Verilog loads our $readmemh files into ROMs and prints the words our
// listing shows at sampled addresses.
import { beforeAll, describe, expect, it } from 'vitest';
import { mkdirSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { spawnSync } from 'node:child_process';
import { join } from 'node:path';
import MemoryMap from 'nrf-intel-hex';
import { runCommand } from '../../server/src/cli/commands';
import { memoryIo } from '../../server/src/cli/io';
import { haveTools } from '../support/tools';

const root = join(__dirname, '../..');
const out = join(root, 'tests/.tmp/build-demo');
const chipFile = (chip: number, ext: string) => join(out, `halyard-32.main.chip${chip}.${ext}`);
const haveSrecord = haveTools(['srec_cat', 'srec_cmp'], 'srecord');
const haveIverilog = haveTools(['iverilog', 'vvp'], 'iverilog');

function run(cmd: string, args: string[]) {
  const r = spawnSync(cmd, args, { cwd: out, encoding: 'utf8' });
  if (r.status !== 0) throw new Error(`${cmd} ${args.join(' ')} failed:\n${r.stderr}`);
  return r.stdout;
}

beforeAll(async () => {
  rmSync(out, { recursive: true, force: true });
  const io = memoryIo(root);
  const code = await runCommand(['build', 'examples/halyard-32.pwt', '--out', 'tests/.tmp/build-demo'], io);
  if (code !== 0) throw new Error(io.stderr);
});

describe('the demo build, read by outside tools', () => {
  it('nrf-intel-hex (npm) reads each chip HEX file to exactly our binary image', () => {
    for (let chip = 0; chip < 4; chip++) {
      const map = MemoryMap.fromHex(readFileSync(chipFile(chip, 'hex'), 'utf8'));
      const blocks = [...map];
      expect(blocks.map(([address]) => address)).toEqual([0]);
      expect(Buffer.from(blocks[0][1]).equals(readFileSync(chipFile(chip, 'bin')))).toBe(true);
    }
  });

  it.skipIf(!haveSrecord)('srec_cat turns our HEX and S-record files into binaries srec_cmp finds identical to ours', () => {
    for (let chip = 0; chip < 4; chip++) {
      run('srec_cat', [chipFile(chip, 'hex'), '-intel', '-o', `from-hex${chip}.bin`, '-binary']);
      run('srec_cat', [chipFile(chip, 'srec'), '-motorola', '-o', `from-srec${chip}.bin`, '-binary']);
      expect(readFileSync(join(out, `from-hex${chip}.bin`)).equals(readFileSync(chipFile(chip, 'bin')))).toBe(true);
      run('srec_cmp', [`from-srec${chip}.bin`, '-binary', chipFile(chip, 'bin'), '-binary']);
    }
  });

  it.skipIf(!haveSrecord)('srec_cat -split 4 N cuts a whole little-endian 32-bit image into our four chip images', () => {
    const lanes = [0, 1, 2, 3].map((c) => readFileSync(chipFile(c, 'bin')));
    const whole = Buffer.alloc(lanes[0].length * 4);
    for (let a = 0; a < lanes[0].length; a++) for (let c = 0; c < 4; c++) whole[a * 4 + c] = lanes[c][a];
    writeFileSync(join(out, 'whole.bin'), whole);
    for (let chip = 0; chip < 4; chip++) {
      run('srec_cat', ['whole.bin', '-binary', '-split', '4', String(chip), '-o', `lane${chip}.bin`, '-binary']);
      expect(readFileSync(join(out, `lane${chip}.bin`)).equals(lanes[chip])).toBe(true);
    }
  });

  it.skipIf(!haveIverilog)('Icarus Verilog loads our $readmemh files and prints the words of our listing', () => {
    const listing = readFileSync(join(out, 'halyard-32.main.lst'), 'utf8');
    const rows = listing
      .split('\n')
      .map((l) => /^ {2}0x([0-9A-F]{4}) {2}.*?\s([0-9A-F]{2})\s+([0-9A-F]{2})\s+([0-9A-F]{2})\s+([0-9A-F]{2})\s{2}/.exec(l))
      .filter((m): m is RegExpExecArray => !!m);
    expect(rows.length).toBe(1202);
    const sample = rows.filter((_, i) => i % 37 === 0);
    const fill = [0x0004, 0x1fff];
    const tb = [
      'module tb;',
      ...[0, 1, 2, 3].map((c) => `  reg [7:0] rom${c} [0:8191];`),
      '  initial begin',
      ...[0, 1, 2, 3].map((c) => `    $readmemh("${chipFile(c, 'memh')}", rom${c});`),
      ...sample.map((m) => `    $display("%h %h %h %h %h", 13'h${m[1]}, rom0[13'h${m[1]}], rom1[13'h${m[1]}], rom2[13'h${m[1]}], rom3[13'h${m[1]}]);`),
      ...fill.map((a) => `    $display("%h %h %h %h %h", 13'h${a.toString(16)}, rom0[${a}], rom1[${a}], rom2[${a}], rom3[${a}]);`),
      '    $finish;',
      '  end',
      'endmodule',
    ].join('\n');
    mkdirSync(out, { recursive: true });
    writeFileSync(join(out, 'tb.v'), tb);
    run('iverilog', ['-g2012', '-o', 'tb.vvp', 'tb.v']);
    const printed = run('vvp', ['-n', 'tb.vvp']).trim().split('\n');
    const expected = [
      ...sample.map((m) => `${m[1]} ${m[2]} ${m[3]} ${m[4]} ${m[5]}`.toLowerCase()),
      // Fill word (every strobe inactive; active-low enables at 1), from the listing's header.
      '0004 0b de 0e 00',
      '1fff 0b de 0e 00',
    ];
    expect(printed).toEqual(expected);
  });
});
