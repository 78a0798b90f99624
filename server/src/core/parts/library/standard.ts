// The standard library: the part kinds every machine may use without declaring them,
// written in the notation itself (`kind` declarations, docs/notation.md) so that hover shows
// what a part does, go-to-definition opens it, and a builder can copy one as the start of their
// own kind. It is read like any table (parse, build, width-check); a test keeps it clean.
//
// The RV32I meanings follow the RISC-V Unprivileged ISA, version 20191213, chapter 2: register
// x0 reads zero (2.1), the immediate formats I, S, B, U and J (2.3, figure 2.4), shifts use the
// low five bits of the amount and SLT/SLTU compare signed/unsigned (2.4), the branch
// conditions (2.5), loads sign- or zero-extend and memory is little-endian (2.6).

/** Where the library's text is shown in the editor (a read-only document). */
export const standardLibraryName = 'standard.pwt';

export const standardLibraryText = String.raw`# Phasewright standard library: the built-in part kinds, written in the notation.
# Read-only. Copy a kind into your table under a new name to make your own.

kind regfile "register file: 32 registers selected by the instruction's rs1, rs2 and rd fields"
  setting width number = 32 "bits per register"
  setting x0 choice hardwired stored guarded = hardwired "hardwired: x0 reads 0 and ignores writes; stored: a real register; guarded: stored, its clock blocked when rd = 0"
  input ir 32 instruction "the instruction register: rs1 = bits 19..15, rs2 = 24..20, rd = 11..7"
  state r width x 32 = 0
  holds registers r
  drive rs1 width = select x0 { hardwired: ir[19:15] == 0 ? 0 : r[ir[19:15]], else: r[ir[19:15]] } "the register the instruction's rs1 field (bits 19..15) selects"
  drive rs2 width = select x0 { hardwired: ir[24:20] == 0 ? 0 : r[ir[24:20]], else: r[ir[24:20]] } "the register the rs2 field (bits 24..20) selects"
  on rd width: r[ir[11:7]] <= in when select x0 { stored: 0b1, else: ir[11:7] != 0 } "loads the register the rd field (bits 11..7) selects"
  drive xout[n] width = select x0 { hardwired: n == 0b00000 ? 0 : r[n], else: r[n] } "a fixed register, written x[5]"
  on xin[n] width: r[n] <= in when select x0 { hardwired: n != 0b00000, else: 0b1 } "loads a fixed register, written x[5]"

kind register "register: loads a bus at the closing edge, can drive a bus"
  setting width number = 32 "bits"
  setting reset number = 0 "value after reset"
  state q width = reset
  drive out width = q "the value it holds"
  on load width: q <= in "loads the bus"

kind counter "counter: a register that can also count up by its increment"
  setting width number = 32 "bits"
  setting inc number = 4 "what a count strobe adds"
  setting bit0 choice kept zero = kept "zero: bit 0 is always stored as 0 (RV32I jump targets need it)"
  setting reset number = 0 "value after reset"
  state q width = reset
  holds pc q
  drive out width = q "the value it holds"
  on load width: q <= select bit0 { kept: in, zero: in & ~1 } "loads the bus"
  on count: q <= select bit0 { kept: q + inc, zero: (q + inc) & ~1 } "adds its increment"

kind instruction "instruction register: its bits feed the address lines, register selects and immediate generator"
  setting width number = 32 "bits"
  setting reset number = 0 "value after reset"
  state q width = reset
  holds instruction q
  drive out width = q "the instruction it holds"
  on load width: q <= in "loads the instruction from the bus"

kind immediate "immediate generator: sign-extended I, S, B, U and J immediate of the instruction"
  input ir 32 after from instruction "the instruction register it rearranges (spec 2.3, figure 2.4); the instruction register when the part line names none"
  control fmt: i s b u j
  drive imm 32 = select fmt { i: sext(ir[31:20], 32), s: sext({ir[31:25], ir[11:7]}, 32), b: sext({ir[31], ir[7], ir[30:25], ir[11:8], 0b0}, 32), u: {ir[31:12], 0x000}, j: sext({ir[31], ir[19:12], ir[20], ir[30:21], 0b0}, 32) } "the immediate of the format the field selects"

kind alu "ALU: combines its two operand buses"
  setting width number = 32 "bits"
  input a width "operand a (a bus)"
  input b width "operand b (a bus)"
  control fn: add sub sll slt sltu xor srl sra or and passa passb
  drive y width = select fn { add: a + b, sub: a - b, sll: a << b[4:0], slt: a <s b ? 1 : 0, sltu: a < b ? 1 : 0, xor: a ^ b, srl: a >> b[4:0], sra: a >>> b[4:0], or: a | b, and: a & b, passa: a, passb: b } "the result of the operation the field selects"

kind compare "comparator: tests its two operand buses and latches a flag"
  setting width number = 32 "bits"
  setting cond choice field funct3 = field "funct3: the condition is the branch's funct3 (spec 2.5); field: a field chooses it"
  input a width "operand a (a bus)"
  input b width "operand b (a bus)"
  input ir 32 instruction "the instruction register, for cond=funct3"
  control test: eq ne lt ge ltu geu
  state f 1 = 0
  on latch: f <= select cond { funct3: select ir[14:12] { 0: a == b, 1: a != b, 4: a <s b, 5: a >=s b, 6: a < b, 7: a >= b, else: 0b0 }, field: select test { eq: a == b, ne: a != b, lt: a <s b, ge: a >=s b, ltu: a < b, geu: a >= b } } "latches the comparison into the flag"
  flag taken = f

kind memory "memory port: reads and writes bytes, halfwords and words (little-endian, spec 2.6)"
  setting width number = 32 "bits"
  input addr 32 keyed "the byte address: a register part or a bus"
  control size: byte half word ubyte uhalf = word
  state m 8 x memory
  drive data width = select size { byte: sext(m[addr], 32), half: sext({m[addr + 1], m[addr]}, 32), word: {m[addr + 3], m[addr + 2], m[addr + 1], m[addr]}, ubyte: zext(m[addr], 32), uhalf: zext({m[addr + 1], m[addr]}, 32) } "the data at the address, of the size the field selects"
  on write width: m[addr] <= in[7:0], m[addr + 1] <= in[15:8] when select size { half: 0b1, word: 0b1, uhalf: 0b1, else: 0b0 }, m[addr + 2] <= in[23:16] when select size { word: 0b1, else: 0b0 }, m[addr + 3] <= in[31:24] when select size { word: 0b1, else: 0b0 } "stores the bus at the address, as many bytes as the size"

kind constant "constant source: a fixed value"
  setting width number = 32 "bits"
  setting value number "the value it drives"
  drive k width = value "its value"

kind sequencer "microcode sequencer: the step counter; each step it counts, loads a target from the word, holds, or clears"
  setting width number = 4 "bits of the step"
  input target width field "the step a jump goes to: a number field of the word"
  control op: count load hold clear = count
  state q width = 0
  holds step q
  on next always: q <= select op { count: q + 1, load: target, hold: q, clear: 0 } "at every closing edge: the next step"

kind callseq "microcode sequencer with a return register: counts, jumps, calls a routine (keeping the step after the call), returns there, holds, or clears"
  setting width number = 4 "bits of the step"
  input target width field "the step a jump or a call goes to: a number field of the word"
  control op: count load hold clear call return = count
  state q width = 0
  state r width = 0
  holds step q
  holds return r
  on next always: q <= select op { count: q + 1, load: target, hold: q, clear: 0, call: target, return: r } "at every closing edge: the next step"
  on save always: r <= select op { call: q + 1, else: r } "at every closing edge: a call keeps the step after it, for the return"

kind nextstep "next-address sequencer: each word names its next step and another target; a field picks which one the step goes to"
  setting width number = 4 "bits of the step"
  input next width field "the step this word goes to: a number field of the word"
  input other width field "the other target: a number field of the word"
  control pick: next other = next
  state q width = 0
  holds step q
  on step always: q <= select pick { next: next, other: other } "at every closing edge: the target the pick field chooses"

kind loopcount "loop counter: loads a count from a bus, counts down, says when it is zero"
  setting width number = 5 "bits"
  state q width = 0
  drive out width = q "the count it holds"
  on load width: q <= in "loads the count from the bus"
  on down: q <= q - 1 "counts down by one"
  flag zero = q == 0

kind presetcount "loop counter for a fixed count: presets a count from a number field of the word (or loads one from a bus), counts down, says when it is zero"
  setting width number = 5 "bits"
  input count width field "the count a preset loads: a number field of the word"
  state q width = 0
  drive out width = q "the count it holds"
  on load width: q <= in "loads the count from the bus"
  on down: q <= q - 1 "counts down by one"
  on preset: q <= count "loads the count the word's field gives"
  flag zero = q == 0
`;
