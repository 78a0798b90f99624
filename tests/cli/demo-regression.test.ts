// The demo's images and simulation traces stay byte for byte what they were before every part
// ran from its kind's definition (issue 14). The SHA-256 sums below were recorded on 2026-12-04
// by running the CLI of commit 18d0d51 (the last whose simulator ran the nine library kinds as
// built-in operations; bundled from `git archive`) on examples/halyard-32.pwt: every image
// `phasewright build` writes, and for a hand-assembled program (below; its bytes are pinned too,
// so a change in our assembler shows up as such) the `trace` text of its first 400 cycles and the
// VCD file of its first 2000 steps without the `$date` section. A changed sum means the encoder
// or the simulator now does something else with the same table: find out why before changing it.
import { createHash } from 'node:crypto';
import { mkdirSync, readFileSync, readdirSync, rmSync, writeFileSync } from 'node:fs';
import { join } from 'node:path';
import { beforeAll, describe, expect, it } from 'vitest';
import { runCommand } from '../../server/src/cli/commands';
import { memoryIo } from '../../server/src/cli/io';
import { assemble, exitWords, ins, toLabel } from '../sim/support';

const root = join(__dirname, '../..');
const tmp = join(root, 'tests/.tmp/demo-regression');
const sha = (bytes: Buffer | string) => createHash('sha256').update(bytes).digest('hex');

const IMAGES: Record<string, string> = {
  'halyard-32.main.chip0.bin': '3e0bb038b1f3d2b4de1450fdfea54ec43b20dece814d3565f2922f956056272e',
  'halyard-32.main.chip0.hex': '8a4fb16edc9406cf3029d4cb628978ff951f653221bb341444ae516a53066898',
  'halyard-32.main.chip0.memh': '4f60c2a26210c131969c2e5366eeb40659c4e2d899a03c369f7886e970dc83c0',
  'halyard-32.main.chip0.srec': 'ffae3b6da1933774f612db70da03fdb6ff51d55d05b651ede99a62618f8403c3',
  'halyard-32.main.chip1.bin': 'e27335bc5dba46f195d79c2f67cf7864f28b9d93c1f51cb5b76727cf3480ebd5',
  'halyard-32.main.chip1.hex': '90cd446bf15caee2c518f502e074b26a06bc2c0a604a0e9685b98004091ddfea',
  'halyard-32.main.chip1.memh': '2acc2b210c109230529508fe5aa8ae34c6e7e3f7b0d6523116a9b957639f4adc',
  'halyard-32.main.chip1.srec': 'c0220c3317ec9fe6021e9587aec3e7a36e1945704d5f90b61719a93eab2b2aaf',
  'halyard-32.main.chip2.bin': 'c6886e425a77846a50044555925af72c73079d39e77d027461c600d997e82042',
  'halyard-32.main.chip2.hex': '7fab3d6d82a0a235254f033d9878ef6eff184598d548c339f384a26d1565b87d',
  'halyard-32.main.chip2.memh': 'e67adc4cccd34052e5720d6ab0f60900bad1cc15cc72e20c14603011b1cccdbc',
  'halyard-32.main.chip2.srec': 'eb5b65cf9f6179360090afa0e4f1d1b0e9a487155b0d3dab9a92c5377227c7df',
  'halyard-32.main.chip3.bin': '4a3fcc0ab20eb9aa50a1aaf77d84d12e53ed3a5a9abbaee87e62c31aacb260da',
  'halyard-32.main.chip3.hex': '56338d3b68f0ccdb56fe023bc1b757646b76cbe18bebf1e5288cc3b10b735b0c',
  'halyard-32.main.chip3.memh': '7f269ae9b76bd573dba7581f265109540b2a9df4e3568d0cd5c75dc9e7ba5515',
  'halyard-32.main.chip3.srec': '4cdfc4cfe1a8f2ae2811ef0d16784ca0e3226fb2a43e57d7d9d537cf8205e3a0',
  'halyard-32.main.lst': 'e0d4b12d48e039cebaf2c4959d87f48ca3ee693409ff1abdf271408d6880751e',
};
const PROGRAM_SHA = 'ad3634b25b5b30149fb375f513038943e953df1fbcce5cb978d74d1e0da2fa11';
const TRACE_SHA = 'fef96130aa875d32b17c32bd3fc66b7a5ef5a2d4d67fee1e86ededb5ff13a930';
const VCD_SHA = 'ea1e410dc324e2769fc6777ebbb38a1130c500a4a14a15d9fd566d1d58942942';

/** A loop over arithmetic, shifts, compares, byte/halfword/word stores and loads, a call and a branch. */
const PROGRAM = assemble([
  ins('addi', { rd: 5, rs1: 0, imm: 0 }), ins('addi', { rd: 6, rs1: 0, imm: 12 }), ins('lui', { rd: 7, imm: 0x3000 << 12 }), ins('addi', { rd: 8, rs1: 0, imm: 1 }),
  { label: 'loop' },
  ins('add', { rd: 9, rs1: 5, rs2: 8 }), ins('xor', { rd: 8, rs1: 8, rs2: 9 }), ins('slli', { rd: 10, rs1: 8, imm: 3 }), ins('srai', { rd: 11, rs1: 10, imm: 2 }),
  ins('sltu', { rd: 12, rs1: 11, rs2: 8 }), ins('sub', { rd: 8, rs1: 8, rs2: 12 }), ins('sb', { rs1: 7, rs2: 8, imm: 1 }), ins('lbu', { rd: 15, rs1: 7, imm: 1 }),
  ins('sh', { rs1: 7, rs2: 9, imm: 6 }), ins('lh', { rd: 16, rs1: 7, imm: 6 }), ins('sw', { rs1: 7, rs2: 11, imm: 8 }), ins('lw', { rd: 17, rs1: 7, imm: 8 }),
  toLabel('jal', 'helper', { rd: 1 }), ins('addi', { rd: 5, rs1: 5, imm: 1 }), toLabel('blt', 'loop', { rs1: 5, rs2: 6 }),
  ins('andi', { rd: 10, rs1: 8, imm: 0xff }), ...exitWords(),
  { label: 'helper' }, ins('auipc', { rd: 18, imm: 0 }), ins('jalr', { rd: 0, rs1: 1, imm: 0 }),
]);

async function run(...args: string[]) {
  const io = memoryIo(root);
  const code = await runCommand(args, io);
  return { code, out: io.stdout, err: io.stderr };
}

describe('the demo, byte for byte as before the open datapath', () => {
  const programPath = join(tmp, 'loop.bin');
  beforeAll(() => {
    rmSync(tmp, { recursive: true, force: true });
    mkdirSync(tmp, { recursive: true });
    const bytes = Buffer.alloc(PROGRAM.length * 4);
    PROGRAM.forEach((w, i) => bytes.writeUInt32LE(w >>> 0, i * 4));
    writeFileSync(programPath, bytes);
  });

  it('writes the same images in every format', async () => {
    expect((await run('build', 'examples/halyard-32.pwt', '--out', 'tests/.tmp/demo-regression/img')).code).toBe(0);
    const files = readdirSync(join(tmp, 'img')).filter((f) => !f.includes('manifest')).sort();
    expect(Object.fromEntries(files.map((f) => [f, sha(readFileSync(join(tmp, 'img', f)))]))).toEqual(IMAGES);
  });

  it('runs the same program through the same cycles: the trace text and the VCD', async () => {
    expect(sha(readFileSync(programPath))).toBe(PROGRAM_SHA);
    const trace = await run('trace', 'examples/halyard-32.pwt', programPath, '--load-address', '0x10000', '--from', '0', '--count', '400');
    expect(trace.code).toBe(0);
    expect(sha(trace.out)).toBe(TRACE_SHA);
    const vcdPath = join(tmp, 'loop.vcd');
    const ran = await run('run', 'examples/halyard-32.pwt', programPath, '--load-address', '0x10000', '--trace', vcdPath, '--trace-steps', '2000');
    expect(ran.err).toContain('instructions retired: 211   steps: 753');
    // The second line is the date the file was written.
    const vcd = readFileSync(vcdPath, 'utf8').split('\n');
    expect(sha(vcd.filter((_, i) => i !== 1).join('\n'))).toBe(VCD_SHA);
  });
});
