# The system-call environment both machines must agree on (Linux RISC-V convention, number in
# a7, arguments in a0..a2, result in a0):
# - write to fd 1 (stdout) and fd 2 (stderr) returns the byte count;
# - write to a descriptor that is not open (99) returns -9, i.e. -EBADF;
# - a zero-length write returns 0 and prints nothing;
# - exit uses only the low 8 bits of its argument: exit(0x12345) gives exit code 0x45.
# Each result is printed as one hex digit pair so a difference shows in stdout.
        .section .text.start, "ax"
        .globl  _start
_start:
        li      a0, 1
        la      a1, out_text
        li      a2, 7
        li      a7, 64
        ecall
        mv      s1, a0                  # 7
        li      a0, 2
        la      a1, err_text
        li      a2, 7
        li      a7, 64
        ecall
        mv      s2, a0                  # 7
        li      a0, 99
        la      a1, out_text
        li      a2, 7
        li      a7, 64
        ecall
        mv      s3, a0                  # -9
        li      a0, 1
        la      a1, out_text
        li      a2, 0
        li      a7, 64
        ecall
        mv      s4, a0                  # 0
        # Print "results ss ss ss ss\n" with each value's low byte in hex.
        la      s5, line
        addi    s6, s5, 8               # first digit slot after "results "
        mv      a0, s1
        jal     ra, put_byte
        mv      a0, s2
        jal     ra, put_byte
        mv      a0, s3
        jal     ra, put_byte
        mv      a0, s4
        jal     ra, put_byte
        li      a0, 1
        mv      a1, s5
        li      a2, 20
        li      a7, 64
        ecall
        li      a0, 0x12345
        li      a7, 93
        ecall

# put_byte: writes the low byte of a0 as two hex digits at s6 and skips a space.
put_byte:
        la      t0, digits
        srli    t1, a0, 4
        andi    t1, t1, 15
        add     t1, t0, t1
        lbu     t1, 0(t1)
        sb      t1, 0(s6)
        andi    t1, a0, 15
        add     t1, t0, t1
        lbu     t1, 0(t1)
        sb      t1, 1(s6)
        addi    s6, s6, 3
        ret

        .section .rodata
out_text:
        .ascii  "stdout\n"
err_text:
        .ascii  "stderr\n"
digits:
        .ascii  "0123456789abcdef"

        .data
line:
        .ascii  "results .. .. .. ..\n"
