# Ends with EBREAK instead of an exit system call. RV32I defines EBREAK as a request to a
# debugger (spec 2.8); qemu-riscv32 user mode has no debugger attached and delivers SIGTRAP, so
# the qemu process dies from signal 5 (a shell reports status 133 = 128 + 5). Our interpreter
# stops with reason 'ebreak' at the EBREAK's address without retiring it. Output written before
# the EBREAK must appear in both.
        .section .text.start, "ax"
        .globl  _start
_start:
        li      a0, 1
        la      a1, message
        li      a2, 24
        li      a7, 64
        ecall
        li      s0, 0x5eed
        ebreak
        # Never reached: an exit the test would notice.
        li      a0, 99
        li      a7, 93
        ecall

        .section .rodata
message:
        .ascii  "about to execute EBREAK\n"
