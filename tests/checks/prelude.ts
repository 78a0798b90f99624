// A small machine shared by the check tests: three buses, a register file, an ALU, a
// comparator and memory. Tests append classes (and sometimes declarations) to it.
import { dedent } from '../support/annotated';

export const prelude = dedent(`
  bus left   32 keeper
  bus right  32 keeper
  bus result 32
  part x    regfile 32 x0=hardwired
  part pc   counter 32 inc=4 bit0=zero
  part ir   instruction 32
  part mar  register 32
  part t    register 32
  part imm  immediate from ir
  part alu  alu left right
  part cmp  compare left right -> taken cond=funct3
  part mem  memory 32 addr=mar
  part four constant 32 value=4
  strobe x.rs1.oe enable x.rs1 -> left    active low
  strobe x.rs2.oe enable x.rs2 -> right   active low
  strobe x.rd.ck  clock result -> x.rd
  strobe x0.ck    clock result -> x[0]
  strobe pc.oe    enable pc -> left       active low
  strobe pc.ck    clock result -> pc
  strobe pc.inc   count pc
  strobe ir.ck    clock result -> ir
  strobe mar.ck   clock result -> mar
  strobe t.ck     clock result -> t
  strobe t.oe     enable t -> result      active low
  strobe t.lck    clock left -> t
  strobe imm.oe   enable imm -> right     active low
  strobe four.oe  enable four -> right    active low
  strobe alu.oe   enable alu -> result    active low
  strobe cmp.ck   clock cmp
  strobe mem.rd   read mem -> result      active low
  strobe mem.wr   write right -> mem      active low
  strobe done     end
  field alu.fn 4 -> alu idle=passa { add=0 sll=1 slt=2 sltu=3 xor=4 srl=5 or=6 and=7 sub=8 sra=13 passa=14 passb=15 }
  field imm.fmt 3 -> imm { i=0 s=1 b=2 u=3 j=4 }
  field mem.size 3 -> mem { byte=0 half=1 word=2 ubyte=4 uhalf=5 }
  word 32 as 4 x 8 chip=28C64
    x.rs1.oe 0  x.rs2.oe 1  x.rd.ck 2  pc.oe 3  pc.ck 4  pc.inc 5  ir.ck 6  mar.ck 7
    t.ck 8  t.oe 9  imm.oe 10  four.oe 11  alu.oe 12  cmp.ck 13  mem.rd 14  mem.wr 15
    alu.fn 16..19  imm.fmt 20..22  done 23  mem.size 24..26  x0.ck 27  t.lck 28
  address 13
    step 0..2  taken 3  f7b5 4  funct3 5..7  opcode 8..12
  map op_fn (funct3, f7b5) -> alu.fn
    000 0 add   000 1 sub   001 0 sll   010 0 slt   011 0 sltu
    100 0 xor   101 0 srl   101 1 sra   110 0 or    111 0 and
  phase fetch
    0: pc.oe, alu.fn=passa, alu.oe, mar.ck
    1: mem.size=word, mem.rd, ir.ck
`);

/** The prelude plus a fixture (already dedented). */
export function machine(fixture: string): string {
  return prelude + dedent(fixture);
}
