// x0-stored-write: the register file keeps x0 in a real register (x0=stored) and some class
// writes rd where rd can be x0. RV32I instructions with rd = x0 are common (the canonical NOP
// `addi x0, x0, 0`, plain jumps `jal x0, ...`), and each would store into x0. The microcode
// may protect x0 itself: with the rd bits (11..7) on the address lines, a write only under a
// guard that excludes rd = 00000 never happens for rd = x0. So the check walks every
// instruction of every class with rd = 00000 from step 0 along its guards (reach.ts) and
// reports the rd writes such a walk reaches.
//
// Which parts and ports this concerns comes from their definitions, run with each part's
// settings (model/partFacts.ts): a register array whose element 0 the read ports really give,
// written by an edge port whose index is instruction bits (rd, 11..7) and whose `when` can hold
// with those bits 0. A `guarded` or `hardwired` x0 fails the second test, a stored one passes.
import { RV32I_INSTRUCTIONS } from '../isa/rv32i';
import { portOfStrobe, registerArrayFacts, settingsKeepingElementZero } from '../model/partFacts';
import type { Action, Part } from '../model/types';
import type { RelatedInfo } from '../text/diagnostic';
import { type Check, classAlternatives, strobeOf } from './context';
import { cubeOfBits, instructionCube, intersect } from './inputSpace';
import { reachedAlternatives } from './reach';


export const x0StoredWrite: Check = {
  codes: ['x0-stored-write'],
  run(ctx) {
    const machine = ctx.machine;
    for (const part of machine.parts.values()) {
      for (const facts of registerArrayFacts(machine, part)) {
        // Element 0 read as stored, written through a port indexed by instruction bits that can store into it.
        const ports = facts.elementZeroStored ? facts.writes.filter((w) => w.writesElementZero && w.indexBits) : [];
        for (const write of ports) checkPort(part, facts.array, write.port, write.indexBits!);
      }
    }
    function checkPort(part: Part, array: string, port: string, bits: { hi: number; lo: number }) {
      // The index bits all zero: rd = x0 for ir[11:7] (RISC-V Unprivileged ISA §2.2, every format with rd).
      const rdIsX0 = cubeOfBits(bits.hi, bits.lo, '0'.repeat(bits.hi - bits.lo + 1));
      const writesRd = (action: Action) => {
        const strobe = strobeOf(machine, action);
        return !!strobe && strobe.part === part.name && strobe.register === undefined && portOfStrobe(machine, part, strobe)?.name === port;
      };
      const writes: RelatedInfo[] = [];
      const seen = new Set<number>();
      const victims = new Set<string>();
      const note = (cls: string, action: Action) => {
        if (seen.has(action.span.start)) return;
        seen.add(action.span.start);
        writes.push({ span: action.span, message: `class ${cls} writes rd here` });
      };
      for (const cls of machine.classes) {
        const specs = RV32I_INSTRUCTIONS.filter((s) => s.opcode === cls.opcode);
        // A class with no RV32I instruction (a custom opcode) is walked with its opcode alone.
        const cubes = specs.length ? specs.map((s) => ({ name: s.mnemonic, cube: instructionCube(s) })) : [{ name: `class ${cls.name}`, cube: { mask: 0, value: 0 } }];
        for (const { name, cube } of cubes) {
          const withX0 = intersect(cube, rdIsX0);
          if (!withX0) continue;
          const reached = reachedAlternatives(machine, cls, withX0);
          // Too many guard inputs to walk: every rd write of the class counts.
          const alts = reached ? reached.map((r) => r.alt) : classAlternatives(machine).filter((c) => c.cls === cls).map((c) => c.alt);
          for (const alt of alts) {
            for (const action of alt.actions) {
              if (!writesRd(action)) continue;
              note(cls.name, action);
              victims.add(name);
            }
          }
        }
      }
      if (writes.length === 0) return;
      const example = victims.has('addi') ? '`addi x0, x0, 0` (the canonical NOP)' : `${[...victims][0]} with rd = x0`;
      const index = `ir[${bits.hi}:${bits.lo}]`;
      const settings = settingsKeepingElementZero(machine, part, array).map((t) => `\`${t}\``);
      const fix = settings.length ? `declare ${settings.join(' or ')}, or ` : '';
      ctx.report(
        'x0-stored-write',
        part.symbol.span,
        `\`${part.name}\` stores x0 (element 0 of \`${array}\`) in a real register and ${writes.length} step(s) write rd through \`${part.name}.${port}\` with nothing to stop rd (\`${index}\`) = x0: ${example} would store into x0; ${fix}write rd only under a guard that excludes \`${index}=${'0'.repeat(bits.hi - bits.lo + 1)}\``,
        writes.slice(0, 20),
      );
    }
  },
};
