# Start-up code and system-call wrappers for the C test programs (Linux RISC-V calling
# convention: number in a7, arguments in a0..a2, result in a0). The loader (qemu-riscv32 user
# mode or our ELF loader) has already zeroed .bss and set sp; _start only aligns sp to the
# 16 bytes the psABI requires, calls main and passes its return value to exit_program (lib.c),
# which flushes buffered output before the exit system call.

        .section .text.start, "ax"
        .globl  _start
_start:
        andi    sp, sp, -16
        call    main
        call    exit_program            # does not return
1:      j       1b

        .text
# long sys_write(int fd, const void *buf, unsigned long len)
        .globl  sys_write
sys_write:
        li      a7, 64
        ecall
        ret

# void sys_exit(int code)
        .globl  sys_exit
sys_exit:
        li      a7, 93
        ecall
1:      j       1b
