# Instruction-by-instruction self-check of the RV32I base set. Every check computes one value
# with the instruction under test, prints "#nnn vvvvvvvv" (check number and value in hex) and
# compares it with the value the RISC-V Unprivileged ISA spec (20191213, chapter 2) prescribes;
# a mismatch adds " != eeeeeeee" with the expected value. The last line counts checks and
# failures. Exit code: 0 when every check passed, 1 otherwise.
#
# All 40 instructions appear here except EBREAK (see ebreak.S). Edge cases covered: x0 as the
# destination of every kind of instruction, sign extension of LB/LH against LBU/LHU, shifts by
# 0 and 31 (and register shift amounts above 31), SLT/SLTU and all branches at 0x80000000,
# 0x7fffffff, -1 and 0, branches with negative offsets, JALR to an odd address (bit 0 cleared),
# JALR with rd = rs1, LUI/AUIPC with bit 31 set, ADDI/ANDI/ORI/XORI/SLTI with immediates that
# set instruction bit 30 (a decoder that reads funct7[5] for OP-IMM would turn them into
# subtractions), SRAI against SRLI, misaligned loads and stores, FENCE variants, ECALL write.
#
# Register use: s0 = check number, s1 = failures, s2 = a saved link value. The check routine
# keeps t0-t6 and clobbers a0-a7 and ra.
# Expected values are written out by hand from the spec's definitions.

        .equ    MESSAGE_BYTES, 18       # length of `message` below; li needs it before use

        .section .text.start, "ax"
        .globl _start
_start:
        li      s0, 0
        li      s1, 0
        j       tests

# check: a0 = computed value, a1 = expected value. Prints one line, counts failures.
# Keeps t0-t6 (saved on the stack); clobbers a0-a7 and ra.
check:
        addi    sp, sp, -32         # t0-t6 survive the call, so operands stay set across checks
        sw      t0, 0(sp)
        sw      t1, 4(sp)
        sw      t2, 8(sp)
        sw      t3, 12(sp)
        sw      t4, 16(sp)
        sw      t5, 20(sp)
        sw      t6, 24(sp)
        addi    s0, s0, 1
        la      t0, linebuf
        li      t5, '#'
        sb      t5, 0(t0)
        addi    t0, t0, 1
        mv      t2, s0
        li      t3, 3
        jal     a7, hexout
        li      t5, ' '
        sb      t5, 0(t0)
        addi    t0, t0, 1
        mv      t2, a0
        li      t3, 8
        jal     a7, hexout
        beq     a0, a1, 1f
        addi    s1, s1, 1
        li      t5, ' '
        sb      t5, 0(t0)
        li      t5, '!'
        sb      t5, 1(t0)
        li      t5, '='
        sb      t5, 2(t0)
        li      t5, ' '
        sb      t5, 3(t0)
        addi    t0, t0, 4
        mv      t2, a1
        li      t3, 8
        jal     a7, hexout
1:      li      t5, '\n'
        sb      t5, 0(t0)
        addi    t0, t0, 1
        la      a1, linebuf
        sub     a2, t0, a1
        li      a0, 1
        li      a7, 64
        ecall
        lw      t0, 0(sp)
        lw      t1, 4(sp)
        lw      t2, 8(sp)
        lw      t3, 12(sp)
        lw      t4, 16(sp)
        lw      t5, 20(sp)
        lw      t6, 24(sp)
        addi    sp, sp, 32
        ret

# hexout: writes t3 hex digits of t2 at t0 and advances t0. Returns through a7. Clobbers t4, t5.
hexout:
        slli    t4, t3, 2
1:      addi    t4, t4, -4
        srl     t5, t2, t4
        andi    t5, t5, 15
        addi    t5, t5, -10
        blt     t5, zero, 2f
        addi    t5, t5, 'a'
        j       3f
2:      addi    t5, t5, '0' + 10
3:      sb      t5, 0(t0)
        addi    t0, t0, 1
        bne     t4, zero, 1b
        jalr    x0, 0(a7)

        .macro CHECK reg, expected
        mv      a0, \reg
        li      a1, \expected
        call    check
        .endm

# Result 1 when the branch is taken forward, else 0.
        .macro BRANCH_FWD insn, a, b, expected
        li      t0, \a
        li      t1, \b
        li      t2, 1
        \insn   t0, t1, 1f
        li      t2, 0
1:      CHECK   t2, \expected
        .endm

# Result 1 when the branch is taken backward (negative offset), else 0.
        .macro BRANCH_BACK insn, a, b, expected
        li      t0, \a
        li      t1, \b
        li      t2, 0
        j       2f
1:      li      t2, 1
        j       3f
2:      \insn   t0, t1, 1b
3:      CHECK   t2, \expected
        .endm

tests:
# ---- LUI: rd = imm << 12 (2.4). Bit 31 set gives a negative value, low 12 bits zero.
        lui     t0, 0x12345
        CHECK   t0, 0x12345000
        lui     t0, 0x80000
        CHECK   t0, 0x80000000
        lui     t0, 0xfffff
        CHECK   t0, 0xfffff000
        li      t0, -1
        lui     t0, 0
        CHECK   t0, 0
        lui     x0, 0xabcde
        CHECK   x0, 0

# ---- AUIPC: rd = pc + (imm << 12). Differences between two AUIPCs are independent of the load address.
        auipc   t0, 0
        auipc   t1, 0x80000
        sub     t2, t1, t0
        CHECK   t2, 0x80000004
        auipc   t0, 0
        auipc   t1, 0xfffff
        sub     t2, t1, t0
        CHECK   t2, 0xfffff004
        auipc   t0, 0
        auipc   t1, 1
        sub     t2, t1, t0
        CHECK   t2, 0x1004
        auipc   x0, 0x12345
        CHECK   x0, 0

# ---- JAL: rd = pc + 4, pc += offset (2.5).
        auipc   t1, 0
        jal     t0, 1f
        li      t1, 0           # skipped by the jump
1:      sub     t2, t0, t1
        CHECK   t2, 8
        li      t3, 0
        j       2f              # jal x0, forward
1:      li      t3, 0x55
        j       3f
2:      jal     x0, 1b          # negative offset, link discarded
3:      CHECK   t3, 0x55
        CHECK   x0, 0
        li      t3, 0
        jal     x0, 1f
        li      t3, 1           # must be skipped
1:      CHECK   t3, 0

# ---- JALR: target = (rs1 + imm) with bit 0 cleared, rd = pc + 4 (2.5).
        la      t0, 1f
        addi    t0, t0, 1       # odd address: bit 0 must be ignored
        li      t3, 0
        jalr    s2, 0(t0)
        li      t3, 1           # must be skipped
1:      la      t0, 1b
        sub     t2, s2, t0      # link = address after the jalr = label - 4 (one skipped instruction)
        CHECK   t3, 0
        CHECK   t2, -4
        la      t0, 1f + 8
        li      t3, 0
        jalr    ra, -8(t0)      # negative offset
        li      t3, 1
1:      CHECK   t3, 0
        la      t0, 1f
        jalr    t0, 0(t0)       # rd = rs1: the target uses the old value
        nop
1:      la      t1, 1b
        sub     t2, t1, t0      # t0 = address of the nop = label - 4
        CHECK   t2, 4
        la      t0, 1f
        addi    t0, t0, 3       # 3 + (-3) = label; bit 0 clear anyway
        jalr    x0, -3(t0)
        li      t3, 1
1:      CHECK   x0, 0

# ---- Branches, forward and backward, at the extremes (2.5). 1 = taken.
        BRANCH_FWD  beq,  0x80000000, 0x80000000, 1
        BRANCH_FWD  beq,  0, -1, 0
        BRANCH_BACK beq,  -1, -1, 1
        BRANCH_BACK beq,  0x7fffffff, 0x80000000, 0
        BRANCH_FWD  bne,  0, -1, 1
        BRANCH_FWD  bne,  0x7fffffff, 0x7fffffff, 0
        BRANCH_BACK bne,  0x80000000, 0, 1
        BRANCH_BACK bne,  0, 0, 0
        BRANCH_FWD  blt,  0x80000000, 0x7fffffff, 1
        BRANCH_FWD  blt,  0x7fffffff, 0x80000000, 0
        BRANCH_FWD  blt,  -1, 0, 1
        BRANCH_FWD  blt,  0, -1, 0
        BRANCH_BACK blt,  0x80000000, -1, 1
        BRANCH_BACK blt,  5, 5, 0
        BRANCH_FWD  bge,  0x7fffffff, 0x80000000, 1
        BRANCH_FWD  bge,  0x80000000, 0x7fffffff, 0
        BRANCH_FWD  bge,  -1, -1, 1
        BRANCH_FWD  bge,  -1, 0, 0
        BRANCH_BACK bge,  0, 0x80000000, 1
        BRANCH_BACK bge,  0x80000000, 0, 0
        BRANCH_FWD  bltu, 0x7fffffff, 0x80000000, 1
        BRANCH_FWD  bltu, 0x80000000, 0x7fffffff, 0
        BRANCH_FWD  bltu, 0, -1, 1
        BRANCH_FWD  bltu, -1, 0, 0
        BRANCH_BACK bltu, 0xfffffffe, -1, 1
        BRANCH_BACK bltu, -1, -1, 0
        BRANCH_FWD  bgeu, 0x80000000, 0x7fffffff, 1
        BRANCH_FWD  bgeu, 0x7fffffff, 0x80000000, 0
        BRANCH_FWD  bgeu, -1, 0, 1
        BRANCH_FWD  bgeu, 0, -1, 0
        BRANCH_BACK bgeu, 0, 0, 1
        BRANCH_BACK bgeu, 0x7fffffff, -1, 0

# ---- Loads (2.6): LB/LH sign-extend, LBU/LHU zero-extend, little-endian byte order.
        la      t0, words
        lb      t1, 0(t0)
        CHECK   t1, 0xffffff94
        lbu     t1, 0(t0)
        CHECK   t1, 0x94
        lb      t1, 3(t0)
        CHECK   t1, 0xfffffff1
        lbu     t1, 3(t0)
        CHECK   t1, 0xf1
        lh      t1, 0(t0)
        CHECK   t1, 0xffff8394
        lhu     t1, 0(t0)
        CHECK   t1, 0x8394
        lh      t1, 2(t0)
        CHECK   t1, 0xfffff1e2
        lhu     t1, 2(t0)
        CHECK   t1, 0xf1e2
        lw      t1, 0(t0)
        CHECK   t1, 0xf1e28394
        lb      t1, 4(t0)
        CHECK   t1, 0x01
        lb      t1, 5(t0)
        CHECK   t1, 0x7f
        lh      t1, 4(t0)
        CHECK   t1, 0x7f01
        lhu     t1, 6(t0)
        CHECK   t1, 0x7f01
        la      t0, words + 8
        lw      t1, -4(t0)      # negative offset
        CHECK   t1, 0x7f017f01
        lbu     t1, -8(t0)
        CHECK   t1, 0x94
        lw      x0, -8(t0)
        CHECK   x0, 0
        lbu     x0, -5(t0)
        CHECK   x0, 0

# ---- Stores (2.6): only the low 8/16 bits of rs2 are written.
        la      t0, scratch
        sw      zero, 0(t0)
        sw      zero, 4(t0)
        li      t1, 0x123456ab
        sb      t1, 1(t0)
        lw      t2, 0(t0)
        CHECK   t2, 0x0000ab00
        li      t1, 0xcafe8001
        sh      t1, 2(t0)
        lw      t2, 0(t0)
        CHECK   t2, 0x8001ab00
        li      t1, 0xdeadbeef
        sw      t1, 4(t0)
        lw      t2, 4(t0)
        CHECK   t2, 0xdeadbeef
        addi    t0, t0, 8
        li      t1, 0x5a
        sb      t1, -1(t0)      # negative offset: byte 7
        lw      t2, -4(t0)
        CHECK   t2, 0x5aadbeef

# ---- Misaligned loads and stores (the spec allows them to work; qemu user mode does them byte-wise).
        la      t0, scratch
        sw      zero, 0(t0)
        sw      zero, 4(t0)
        li      t1, 0x11223344
        sw      t1, 1(t0)
        lw      t2, 0(t0)
        CHECK   t2, 0x22334400
        lw      t2, 4(t0)
        CHECK   t2, 0x00000011
        lw      t2, 1(t0)
        CHECK   t2, 0x11223344
        lh      t2, 3(t0)
        CHECK   t2, 0x1122
        li      t1, 0x8899
        sh      t1, 3(t0)
        lhu     t2, 3(t0)
        CHECK   t2, 0x8899
        lh      t2, 3(t0)
        CHECK   t2, 0xffff8899
        lw      t2, 2(t0)
        CHECK   t2, 0x00889933

# ---- OP-IMM (2.4). Immediates that set instruction bit 30 come first.
        li      t0, 100
        addi    t1, t0, -5
        CHECK   t1, 95
        addi    t1, zero, 1024      # imm bit 10 = instruction bit 30, positive value
        CHECK   t1, 1024
        addi    t1, t0, -2048
        CHECK   t1, -1948
        addi    t1, t0, 2047
        CHECK   t1, 2147
        li      t0, 0x7fffffff
        addi    t1, t0, 1           # wraps to the most negative value
        CHECK   t1, 0x80000000
        addi    x0, t0, 5
        CHECK   x0, 0
        addi    t1, x0, -1
        CHECK   t1, 0xffffffff
        li      t0, 0x80000000
        slti    t1, t0, -1
        CHECK   t1, 1
        li      t0, -1
        slti    t1, t0, -1
        CHECK   t1, 0
        slti    t1, t0, 0
        CHECK   t1, 1
        li      t0, 0x7fffffff
        slti    t1, t0, -2048
        CHECK   t1, 0
        li      t0, 0xfffffffe
        sltiu   t1, t0, -1          # the immediate is sign-extended, then compared unsigned
        CHECK   t1, 1
        li      t0, -1
        sltiu   t1, t0, -1
        CHECK   t1, 0
        li      t0, 0
        sltiu   t1, t0, 1
        CHECK   t1, 1
        li      t0, 0x80000000
        sltiu   t1, t0, 2047
        CHECK   t1, 0
        li      t0, 0x0f0f0f0f
        xori    t1, t0, -1
        CHECK   t1, 0xf0f0f0f0
        xori    t1, t0, 0x555
        CHECK   t1, 0x0f0f0a5a
        xori    t1, t0, 1024
        CHECK   t1, 0x0f0f0b0f
        ori     t1, t0, -2048
        CHECK   t1, 0xffffff0f
        ori     t1, t0, 0x4f0
        CHECK   t1, 0x0f0f0fff
        li      t0, 0x12345678
        andi    t1, t0, -16
        CHECK   t1, 0x12345670
        andi    t1, t0, 0x7ff
        CHECK   t1, 0x678
        andi    t1, t0, 1024
        CHECK   t1, 0x400
        andi    x0, t0, -1
        CHECK   x0, 0

# ---- Shifts by immediate: only the low 5 bits matter; SRAI has instruction bit 30 set.
        li      t0, 0x80000001
        slli    t1, t0, 0
        CHECK   t1, 0x80000001
        slli    t1, t0, 1
        CHECK   t1, 0x00000002
        slli    t1, t0, 31
        CHECK   t1, 0x80000000
        srli    t1, t0, 0
        CHECK   t1, 0x80000001
        srli    t1, t0, 1
        CHECK   t1, 0x40000000
        srli    t1, t0, 31
        CHECK   t1, 1
        srai    t1, t0, 0
        CHECK   t1, 0x80000001
        srai    t1, t0, 1
        CHECK   t1, 0xc0000000
        srai    t1, t0, 31
        CHECK   t1, 0xffffffff
        li      t0, 0x7ffffff0
        srai    t1, t0, 4
        CHECK   t1, 0x07ffffff
        srli    t1, t0, 4
        CHECK   t1, 0x07ffffff
        li      t0, -1
        srli    t1, t0, 1
        CHECK   t1, 0x7fffffff
        srai    t1, t0, 1
        CHECK   t1, 0xffffffff
        slli    x0, t0, 3
        CHECK   x0, 0

# ---- OP: register-register (2.4).
        li      t0, 0x7fffffff
        li      t1, 1
        add     t2, t0, t1
        CHECK   t2, 0x80000000
        li      t0, -1
        add     t2, t0, t1
        CHECK   t2, 0
        li      t0, 0
        li      t1, 0x80000000
        sub     t2, t0, t1
        CHECK   t2, 0x80000000
        li      t1, 1
        sub     t2, t0, t1
        CHECK   t2, 0xffffffff
        li      t0, 0x12345678
        sub     t2, t0, t0
        CHECK   t2, 0
        add     t0, t0, t0          # rd = rs1 = rs2
        CHECK   t0, 0x2468acf0
        li      t0, 0x80000001
        li      t1, 0
        sll     t2, t0, t1
        CHECK   t2, 0x80000001
        li      t1, 31
        sll     t2, t0, t1
        CHECK   t2, 0x80000000
        li      t1, 33              # only rs2[4:0] = 1 counts
        sll     t2, t0, t1
        CHECK   t2, 0x00000002
        li      t1, -1              # rs2[4:0] = 31
        srl     t2, t0, t1
        CHECK   t2, 1
        li      t1, 0
        srl     t2, t0, t1
        CHECK   t2, 0x80000001
        li      t1, 36
        srl     t2, t0, t1
        CHECK   t2, 0x08000000
        sra     t2, t0, t1
        CHECK   t2, 0xf8000000
        li      t1, 31
        sra     t2, t0, t1
        CHECK   t2, 0xffffffff
        li      t1, 0
        sra     t2, t0, t1
        CHECK   t2, 0x80000001
        li      t0, 0x80000000
        li      t1, 0x7fffffff
        slt     t2, t0, t1
        CHECK   t2, 1
        sltu    t2, t0, t1
        CHECK   t2, 0
        slt     t2, t1, t0
        CHECK   t2, 0
        sltu    t2, t1, t0
        CHECK   t2, 1
        li      t0, -1
        li      t1, 0
        slt     t2, t0, t1
        CHECK   t2, 1
        sltu    t2, t0, t1
        CHECK   t2, 0
        sltu    t2, zero, t0        # snez
        CHECK   t2, 1
        slt     t2, t0, t0
        CHECK   t2, 0
        li      t0, 0xff00ff00
        li      t1, 0x0ff00ff0
        xor     t2, t0, t1
        CHECK   t2, 0xf0f0f0f0
        or      t2, t0, t1
        CHECK   t2, 0xfff0fff0
        and     t2, t0, t1
        CHECK   t2, 0x0f000f00
        add     x0, t0, t1
        CHECK   x0, 0
        sub     x0, t0, t1
        CHECK   x0, 0
        sltu    x0, zero, t0
        CHECK   x0, 0
        add     t2, x0, x0
        CHECK   t2, 0

# ---- FENCE (2.7): no architectural effect on a single hart; reserved fields are ignored.
        li      t1, 0x600d
        fence   iorw, iorw
        fence   w, r
        fence
        fence.tso
        .insn   0x0ff0008f          # FENCE with rd = x1: the rd field is ignored, x1 stays
        .insn   0x0ff2800f          # FENCE with rs1 = x5: ignored as well
        CHECK   t1, 0x600d

# ---- ECALL (2.8): write(1, msg, len) returns the length in a0.
        li      a0, 1
        la      a1, message
        li      a2, MESSAGE_BYTES
        li      a7, 64
        ecall
        CHECK   a0, MESSAGE_BYTES

# ---- Summary: "checks nnn failed nnn", exit(failed != 0).
        la      t0, linebuf
        la      t1, summary
1:      lbu     t5, 0(t1)
        beq     t5, zero, 2f
        sb      t5, 0(t0)
        addi    t0, t0, 1
        addi    t1, t1, 1
        j       1b
2:      mv      t2, s0
        li      t3, 3
        jal     a7, hexout
        la      t1, failed
3:      lbu     t5, 0(t1)
        beq     t5, zero, 4f
        sb      t5, 0(t0)
        addi    t0, t0, 1
        addi    t1, t1, 1
        j       3b
4:      mv      t2, s1
        li      t3, 3
        jal     a7, hexout
        li      t5, '\n'
        sb      t5, 0(t0)
        addi    t0, t0, 1
        la      a1, linebuf
        sub     a2, t0, a1
        li      a0, 1
        li      a7, 64
        ecall
        sltu    a0, zero, s1
        li      a7, 93
        ecall

        .section .rodata
message:
        .ascii  "ecall write works\n"
summary:
        .asciz  "selfcheck checks 0x"
failed:
        .asciz  " failed 0x"

        .data
        .balign 4
words:
        .word   0xf1e28394          # bytes 94 83 e2 f1
        .word   0x7f017f01          # bytes 01 7f 01 7f

        .bss
        .balign 4
scratch:
        .space  16
linebuf:
        .space  64
