// Tables shared by tests of different layers.
import { dedent } from './annotated';

/**
 * Two stores: a main store addressed by step and opcode, and a decoder store addressed by the
 * opcode alone that holds the ALU function, which only the execute step sets (so the decoder
 * store can hold it without step lines). Checks clean; encodes without ambiguity.
 */
export const decoderStoreTable = dedent(`
      bus result 8
      part a register 8
      part b register 8
      part alu alu result result
      strobe a.oe enable a -> result active low
      strobe alu.oe enable alu -> result active low
      strobe b.ck clock result -> b
      strobe done end
      field alu.fn 4 -> alu idle=passa { add=0 sub=8 passa=14 }
      store main
        word 8 as 1 x 8
          a.oe 0  alu.oe 1  b.ck 2  done 3
        address 7
          step 0..1  opcode 2..6
      store decode
        word 8 as 1 x 8
          alu.fn 0..3
        address 5
          opcode 0..4
      class OP opcode=0110011
        0: a.oe, b.ck
        1: alu.fn=add, alu.oe, b.ck, done
      class SUBTRACT opcode=0001011
        0: a.oe, b.ck
        1: alu.fn=sub, alu.oe, b.ck, done
`);

/**
 * Two stores in series: a decoder store addressed by the opcode holds the `entry` field, and
 * the main store's address is the step counter and that field, so the main store's word is
 * valid only after both access times. Every step sets `entry` (fetch included), so every class
 * is reached where its words stand. Checks clean. Figures: 70 ns decoder, 150 ns main store.
 */
export const chainedStoreTable = dedent(`
      bus result 8 settle_ns=10
      part a register 8 en_ns=38 tsu_ns=12
      part b register 8 tsu_ns=12
      strobe a.oe enable a -> result active low
      strobe b.ck clock result -> b
      strobe done end
      field entry 2 { none=0 op=1 sub=2 }
      store decode
        word 8 as 1 x 8 access_ns=70
          entry 0..1
        address 5
          opcode 0..4
      store main
        word 8 as 1 x 8 access_ns=150
          a.oe 0  b.ck 1  done 2
        address 4
          step 0..1  entry 2..3
      class OP opcode=0110011
        0: entry=op, a.oe, b.ck
        1: entry=op, a.oe, b.ck, done
      class SUBTRACT opcode=0001011
        0: entry=sub, a.oe, b.ck
        1: entry=sub, done
`);

/**
 * An entry-point decoder: store `dec`, addressed by the opcode, holds the field `entry` that
 * feeds the main store's address lines in place of the opcode. Here the shared fetch phase
 * does not set `entry`, so the table lays the fetch word at entry=none (the idle code) while
 * the hardware forms entry=op or entry=sub from `dec` at every step: fetch never runs. It
 * checks clean (whether a check should catch it is another matter); the listing must show it.
 */
export const entryDecoderTable = dedent(`
      bus result 8
      part a register 8
      part b register 8
      strobe a.oe enable a -> result active low
      strobe b.ck clock result -> b
      strobe done end
      field entry 2 idle=none { op=0 sub=1 none=3 }
      store dec
        word 8 as 1 x 8
          entry 0..1
        address 5
          opcode 0..4
      store main
        word 8 as 1 x 8
          a.oe 0  b.ck 1  done 2
        address 3
          step 0  entry 1..2
      phase fetch
        0: a.oe, b.ck
      class OP opcode=0110011
        use fetch
        1: a.oe, b.ck, done, entry=op
      class SUBTRACT opcode=0001011
        use fetch
        1: a.oe, done, entry=sub
`);

/** The same design with each class's step 0 setting its entry, as the hardware needs: every word is reached. */
export const entryDecoderFixed = entryDecoderTable
  .replace(/phase fetch\n\s+0: a\.oe, b\.ck\n/, '')
  .replace(/( +)use fetch\n(\s+1: a\.oe, b\.ck, done, entry=op)/, '$10: a.oe, b.ck, entry=op\n$2')
  .replace(/( +)use fetch\n(\s+1: a\.oe, done, entry=sub)/, '$10: a.oe, b.ck, entry=sub\n$2');
