// The text of docs/semantics.md, printed from the RV32I semantics table
// (server/src/core/isa/semantics.ts): the inputs, the format immediates, and every instruction's
// effect printed back from its checked trees. scripts/semantics-doc.ts writes it; a test
// (tests/isa/semantics.test.ts) holds the page equal to this text, so it cannot drift.
import { IMMEDIATES, REGISTER_FIELDS, SEMANTICS, describeEffect, effectOf } from '../server/src/core/isa/semantics';

const SECTIONS: Record<string, string> = {
  '2.4': 'Integer computational instructions',
  '2.5': 'Control transfer instructions',
  '2.6': 'Load and store instructions',
  '2.7': 'Memory ordering instructions',
  '2.8': 'Environment call and breakpoints',
};

export function semanticsPage(): string {
  const lines = [
    '# RV32I semantics',
    '',
    'What each of the 40 RV32I instructions does to the architectural state, written once as data in',
    '`server/src/core/isa/semantics.ts` in the expression language of `docs/expressions.md`. The table',
    'is written from the RISC-V Instruction Set Manual, Volume I: Unprivileged ISA, version 20191213,',
    'chapter 2; each instruction below names its section. A test runs every instruction on random',
    'states through the reference interpreter and through these expressions and requires the same',
    'next pc, register write and memory write (`tests/isa/semantics.test.ts`); the interpreter is',
    'itself compared with qemu-riscv32 on whole programs. The prover is to use the same trees.',
    '',
    'This page is printed from the table by `node scripts/run-ts.mjs scripts/semantics-doc.ts`; edit the',
    'table, not this page.',
    '',
    '## Names',
    '',
    '- `pc`: the address of the instruction; `ir`: the instruction word (32 bits each).',
    `- \`rs1v\`, \`rs2v\`: the values of the registers \`${REGISTER_FIELDS.rs1}\` and \`${REGISTER_FIELDS.rs2}\` select (x0 reads 0, spec 2.1).`,
    `- \`rd = …\` is the value written to the register \`${REGISTER_FIELDS.rd}\`; a write to x0 is discarded (spec 2.1).`,
    '- `m[a]`: the byte of memory at the 32-bit address `a`; memory is little-endian, and a misaligned',
    '  load or store reads or writes its bytes one by one (as the reference interpreter and qemu-riscv32',
    '  user mode do; the spec lets the execution environment choose, 2.6).',
    '- `imm`: the immediate of the instruction\'s format (spec 2.3):',
    '',
    '```',
    ...Object.entries(IMMEDIATES).map(([format, text]) => `${format}  imm = ${text}`),
    '```',
    '',
    '- `addr` (loads, stores), `target` (jumps, branches), `taken` (branches): defined by the',
    '  instruction, in that order, as shown.',
    '- "does not retire when …": the instruction raises instruction-address-misaligned (spec 2.2,',
    '  2.5) — the target of a taken branch or a jump is not a multiple of 4 — and changes nothing.',
    '',
  ];
  for (const [section, title] of Object.entries(SECTIONS)) {
    lines.push(`## ${section} ${title}`, '', '```');
    for (const row of SEMANTICS.filter((r) => r.section === section)) {
      lines.push(`${row.mnemonic.padEnd(7)}${row.says}`);
      for (const line of describeEffect(effectOf(row.mnemonic))) lines.push(`       ${line}`);
    }
    lines.push('```', '');
  }
  return lines.join('\n');
}
