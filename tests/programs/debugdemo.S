# A small program for the debugger's tests: two constants, a call to a function with a size
# (so it can take a breakpoint by name and be stepped out of), a store, a write and an exit.
# Values by the RV32I spec (chapter 2): ADDI adds the sign-extended immediate (2.4), ADD adds
# registers (2.4), JAL writes pc + 4 to rd (2.5), SW stores rs2 at rs1 + offset (2.6).
#   a0 = 5, a1 = 7; add3 returns a0 + a1 + 3 = 15; s0 = 15; the word at sp - 4 = 15;
#   write(1, "ok\n", 3); exit(15).
        .section .text.start, "ax"
        .globl  _start
_start:
        li      a0, 5
        li      a1, 7
        jal     ra, add3
        mv      s0, a0
        sw      s0, -4(sp)
        li      a0, 1
        la      a1, message
        li      a2, 3
        li      a7, 64
        ecall
        mv      a0, s0
        li      a7, 93
        ecall

        .text
        .globl  add3
        .type   add3, @function
add3:
        add     a0, a0, a1
        addi    a0, a0, 3
        ret
        .size   add3, . - add3

        .section .rodata
message:
        .ascii  "ok\n"
