// class-opcode: each class needs a 7-bit opcode whose low two bits are 11 (every 32-bit RISC-V
// instruction; spec §1.5), and no two classes may share one. Opcodes outside the RV32I map are
// allowed, for builders adding custom instructions in the custom-0/1 opcode space.
import { type Check } from './context';
import { toBinary } from '../model/numbers';

export const classOpcode: Check = {
  codes: ['class-opcode'],
  run(ctx) {
    const byOpcode = new Map<number, string>();
    for (const cls of ctx.machine.classes) {
      if (cls.opcode === undefined) {
        ctx.report('class-opcode', cls.symbol.span, `class ${cls.name} has no opcode, so no instruction selects it; add \`opcode=\` and the seven opcode bits, e.g. \`opcode=0110011\``);
        continue;
      }
      if ((cls.opcode & 3) !== 3) {
        ctx.report('class-opcode', cls.opcodeSpan!, `opcode ${toBinary(cls.opcode, 7)} does not end in 11: every 32-bit RISC-V instruction has bits 1..0 = 11, so this class can never be selected`);
        continue;
      }
      const other = byOpcode.get(cls.opcode);
      if (other) {
        const first = ctx.machine.classes.find((c) => c.name === other)!;
        ctx.report('class-opcode', cls.opcodeSpan!, `class ${other} already handles opcode ${toBinary(cls.opcode, 7)}; one class per opcode (use guards for the cases)`, [
          { span: first.opcodeSpan!, message: `class ${other}` },
        ]);
        continue;
      }
      byOpcode.set(cls.opcode, cls.name);
    }
  },
};
