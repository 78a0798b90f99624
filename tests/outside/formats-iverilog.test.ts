// Our `$readmemh` files loaded by a real Verilog simulator (Icarus Verilog, Debian iverilog):
// a test bench declares the ROM the way a hardware model would, loads our file and prints
// every word; the printed words must equal our image (a word the file did not set prints as
// x), with no simulator warnings (for files without @ lines, that is also how it reports a
// file with too few or too many words).
import { spawnSync } from 'node:child_process';
import { mkdtempSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import { writeMemh, type ChipImage, type ChipWidth, type MemhWriteOptions } from '../../server/src/core/encode/formats/index';
import { haveTools } from '../support/tools';

const canRun = haveTools(['iverilog', 'vvp'], 'iverilog');
const workDir = mkdtempSync(join(tmpdir(), 'phasewright-iverilog-'));
afterAll(() => rmSync(workDir, { recursive: true, force: true }));

function sampleImage(widthBits: ChipWidth, nWords: number, seed: number): ChipImage {
  const words = widthBits === 8 ? new Uint8Array(nWords) : widthBits === 16 ? new Uint16Array(nWords) : new Uint32Array(nWords);
  let state = seed >>> 0;
  for (let address = 0; address < nWords; address++) {
    state = (Math.imul(state, 1664525) + 1013904223) >>> 0;
    words[address] = widthBits === 32 ? state : state >>> (32 - widthBits);
  }
  return { widthBits, words };
}

/** Loads `memhName` into `reg [W-1:0] rom [0:N-1]` and returns the words vvp prints, one per address. */
function simulate(label: string, memhName: string, widthBits: number, nWords: number): { words: string[]; output: string } {
  const bench = `module tb;
  reg [${widthBits - 1}:0] rom [0:${nWords - 1}];
  integer address;
  initial begin
    $readmemh("${memhName}", rom);
    for (address = 0; address < ${nWords}; address = address + 1)
      $display("W %h", rom[address]);
    $finish;
  end
endmodule
`;
  writeFileSync(join(workDir, `${label}.v`), bench);
  const compile = spawnSync('iverilog', ['-g2012', '-o', `${label}.vvp`, `${label}.v`], { cwd: workDir, encoding: 'utf8' });
  if (compile.status !== 0) throw new Error(`iverilog failed: ${compile.stderr}`);
  const sim = spawnSync('vvp', ['-n', `${label}.vvp`], { cwd: workDir, encoding: 'utf8', maxBuffer: 64 * 1024 * 1024 });
  if (sim.status !== 0) throw new Error(`vvp failed: ${sim.stderr}`);
  const output = `${sim.stdout}${sim.stderr}`;
  const words = output.split('\n').filter((line) => line.startsWith('W ')).map((line) => line.slice(2));
  return { words, output };
}

/** Our words as Verilog's %h prints them: lowercase, zero-padded to the width. */
function expectedWords(image: ChipImage): string[] {
  return Array.from(image.words, (word) => word.toString(16).padStart(image.widthBits / 4, '0'));
}

const cases: { label: string; image: ChipImage; options: MemhWriteOptions }[] = [
  { label: 'rom8', image: sampleImage(8, 8192, 1), options: { sourceName: 'demo.pw', description: 'store main, chip 0' } },
  { label: 'rom16', image: sampleImage(16, 1000, 2), options: { addressEvery: 0 } },
  { label: 'rom32', image: sampleImage(32, 65536, 3), options: { lineEnding: 'crlf', addressEvery: 4096 } },
  { label: 'rom32small', image: sampleImage(32, 300, 4), options: { addressEvery: 1 } },
];

describe.skipIf(!canRun)('iverilog $readmemh loads our .memh files', () => {
  for (const { label, image, options } of cases) {
    it(`${label}: ${image.words.length} words of ${image.widthBits} bits`, () => {
      writeFileSync(join(workDir, `${label}.memh`), writeMemh(image, options));
      const { words, output } = simulate(label, `${label}.memh`, image.widthBits, image.words.length);
      expect(output).not.toMatch(/warning|error/i);
      expect(words.length).toBe(image.words.length);
      expect(words).toEqual(expectedWords(image));
    });
  }

  it('the comparison fires on a file with other data or too few words', () => {
    const image = sampleImage(8, 256, 5);
    const other = sampleImage(8, 256, 6);
    writeFileSync(join(workDir, 'other.memh'), writeMemh(other));
    expect(simulate('other', 'other.memh', 8, 256).words).not.toEqual(expectedWords(image));
    // A file one word short leaves the last word undefined; without address lines the
    // simulator also warns that the file has too few words.
    writeFileSync(join(workDir, 'short.memh'), writeMemh({ widthBits: 8, words: image.words.subarray(0, 255) }, { addressEvery: 0 }));
    const short = simulate('short', 'short.memh', 8, 256);
    expect(short.words.at(-1)).toBe('xx');
    expect(short.output).toMatch(/warning/i);
  });
});
