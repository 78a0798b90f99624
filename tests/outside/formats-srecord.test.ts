// Our Intel HEX, S-record and binary images checked with Debian's srecord tools: srec_cat
// converts our text files to binary and srec_cmp must find them identical to our own binary;
// srec_info must see our S0 header; and srec_cat's byte-lane split of a 32-bit store must equal
// the per-chip images we build by taking byte k of every little-endian word.
import { spawnSync } from 'node:child_process';
import { mkdtempSync, readFileSync, rmSync, writeFileSync } from 'node:fs';
import { tmpdir } from 'node:os';
import { join } from 'node:path';
import { afterAll, describe, expect, it } from 'vitest';
import {
  imageBytes,
  splitWordsIntoChips,
  writeBinary,
  writeIntelHex,
  writeSRecord,
  type ChipImage,
  type ChipWidth,
} from '../../server/src/core/encode/formats/index';
import { haveTools } from '../support/tools';

const canRun = haveTools(['srec_cat', 'srec_cmp', 'srec_info'], 'srecord');
const workDir = mkdtempSync(join(tmpdir(), 'phasewright-srecord-'));
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

function run(command: string, args: string[]): { status: number | null; output: string } {
  const result = spawnSync(command, args, { cwd: workDir, encoding: 'utf8' });
  return { status: result.status, output: `${result.stdout}${result.stderr}` };
}

function put(name: string, bytes: Uint8Array): string {
  writeFileSync(join(workDir, name), bytes);
  return name;
}

const cases: { label: string; image: ChipImage }[] = [
  { label: '8 KiB 8-bit chip (28C64 size)', image: sampleImage(8, 8192, 1) },
  { label: '200000-byte 8-bit image (04 records, S2 records, S6 count)', image: sampleImage(8, 200000, 2) },
  { label: '16-bit chip of 40000 words', image: sampleImage(16, 40000, 3) },
  { label: '32-bit store of 65536 words', image: sampleImage(32, 65536, 4) },
];

describe.skipIf(!canRun)('srec_cat converts our files to the same binary', () => {
  cases.forEach(({ label, image }, index) => {
    it(label, () => {
      const ours = put(`ours${index}.bin`, writeBinary(image));
      const hex = put(`ours${index}.hex`, writeIntelHex(image));
      const srecBytes = writeSRecord(image, { bytesPerLine: index === 1 ? 2 : 16, moduleName: 'demo.pw' });
      const srec = put(`ours${index}.srec`, srecBytes);
      if (index === 1) {
        // 100000 two-byte records: S2 data, an S6 count (above 65535) and S8 termination.
        expect(Buffer.from(srecBytes).toString('latin1')).toMatch(/^S2[\s\S]*^S6040186A0D4$\n^S804000000FB$/m);
      }
      // srec_cat FILE -intel|-motorola -o OUT -binary writes each byte at its address.
      expect(run('srec_cat', [hex, '-intel', '-o', `x${index}.bin`, '-binary'])).toEqual({ status: 0, output: '' });
      expect(run('srec_cat', [srec, '-motorola', '-o', `y${index}.bin`, '-binary'])).toEqual({ status: 0, output: '' });
      expect(run('srec_cmp', [`x${index}.bin`, '-binary', ours, '-binary']).status).toBe(0);
      expect(run('srec_cmp', [`y${index}.bin`, '-binary', ours, '-binary']).status).toBe(0);
      // Also byte for byte here, so a tolerant comparison could not hide a length difference.
      expect(Buffer.compare(readFileSync(join(workDir, `x${index}.bin`)), Buffer.from(imageBytes(image)))).toBe(0);
      expect(Buffer.compare(readFileSync(join(workDir, `y${index}.bin`)), Buffer.from(imageBytes(image)))).toBe(0);
      const info = run('srec_info', [srec, '-motorola']);
      expect(info.output).toContain('Header: "demo.pw"');
      expect(info.output).toContain('Execution Start Address: 00000000');
    });
  });

  it('srec_cmp and srec_cat do fire on a changed byte and a bad checksum', () => {
    const image = sampleImage(8, 4096, 5);
    const ours = put('good.bin', writeBinary(image));
    const changed = image.words.slice();
    changed[1000] = changed[1000]! ^ 0x10;
    put('changed.hex', writeIntelHex({ widthBits: 8, words: changed }));
    expect(run('srec_cmp', ['changed.hex', '-intel', ours, '-binary']).status).not.toBe(0);
    const text = Buffer.from(writeSRecord(image)).toString('latin1').split('\n');
    text[2] = text[2]!.slice(0, -2) + (text[2]!.endsWith('00') ? '01' : '00');
    writeFileSync(join(workDir, 'damaged.srec'), text.join('\n'));
    const damaged = run('srec_cat', ['damaged.srec', '-motorola', '-o', 'damaged.bin', '-binary']);
    expect(damaged.status).not.toBe(0);
    expect(damaged.output).toMatch(/damaged\.srec: 3: checksum mismatch/);
  });
});

describe.skipIf(!canRun)('byte lanes of a 32-bit store', () => {
  // The encoder gives chip k bits 8k+7..8k of each control word; with little-endian words that
  // is byte k of every 4-byte group, which is what srec_cat's "-split 4 k" extracts. srecord
  // 1.64 puts the extracted lane at address 0 (checked here by comparing whole files: an
  // offset would show up as leading fill and a length difference).
  const nWords = 8192;
  const store = sampleImage(32, nWords, 6) as { widthBits: 32; words: Uint32Array };
  const lanes = [0, 1, 2, 3].map((lane) => ({
    widthBits: 8 as const,
    words: Uint8Array.from(store.words, (word) => (word >>> (8 * lane)) & 0xff),
  }));

  it('our chip splitter gives the same lanes as the plain shift-and-mask above', () => {
    const split = splitWordsIntoChips(store.words, 1, [8, 8, 8, 8]);
    split.forEach((chip, lane) => expect(Buffer.compare(Buffer.from(chip.words), Buffer.from(lanes[lane]!.words))).toBe(0));
  });

  it('srec_cat -split 4 N gives exactly our lane images', () => {
    put('full32.bin', writeBinary(store));
    for (let lane = 0; lane < 4; lane++) {
      const split = run('srec_cat', ['full32.bin', '-binary', '-split', '4', String(lane), '-o', `lane${lane}.bin`, '-binary']);
      expect(split).toEqual({ status: 0, output: '' });
      const theirs = readFileSync(join(workDir, `lane${lane}.bin`));
      expect(theirs.length).toBe(nWords);
      expect(Buffer.compare(theirs, Buffer.from(writeBinary(lanes[lane]!)))).toBe(0);
      put(`ourLane${lane}.hex`, writeIntelHex(lanes[lane]!));
      expect(run('srec_cmp', [`ourLane${lane}.hex`, '-intel', `lane${lane}.bin`, '-binary']).status).toBe(0);
    }
  });

  it('a lane taken from the wrong byte position does not match (the check can fail)', () => {
    put('full32b.bin', writeBinary(store));
    expect(run('srec_cat', ['full32b.bin', '-binary', '-split', '4', '1', '-o', 'wrong.bin', '-binary']).status).toBe(0);
    put('lane0again.bin', writeBinary(lanes[0]!));
    expect(run('srec_cmp', ['wrong.bin', '-binary', 'lane0again.bin', '-binary']).status).not.toBe(0);
  });

  it('srec_info reads the source file name from the S0 record of a built image', async () => {
    const { runCommand } = await import('../../server/src/cli/commands');
    const { memoryIo } = await import('../../server/src/cli/io');
    const root = join(__dirname, '../..');
    expect(await runCommand(['build', 'examples/halyard-32.pwt', '--out', join(workDir, 'built'), '--format', 'srec'], memoryIo(root))).toBe(0);
    const info = run('srec_info', [join(workDir, 'built/halyard-32.main.chip1.srec'), '-motorola']);
    expect(info.status).toBe(0);
    expect(info.output).toContain('Header: "halyard-32.pwt"');
  });
});
