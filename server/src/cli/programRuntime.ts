// The files `phasewright compile` adds to a C program so it runs as a bare RV32I executable,
// under `phasewright run` and under qemu-riscv32 user mode alike: a start-up file (`_start`
// first, calls main, passes its result to exit), the two Linux system calls the simulator's
// environment serves (write, exit), the memory functions gcc may call even in freestanding
// code, a header declaring them, and a linker script. They are written to a scratch folder for
// each compilation, so the CLI needs nothing installed besides the cross compiler.
//
// Deliberately not here: running the compiler (commands/compile.ts) and any C library (there
// is none: no printf, no malloc).

/** `_start` and the system calls (Linux RISC-V: number in a7, arguments in a0..a2, result in a0). */
export const startFile = `# Start-up code of \`phasewright compile\`. The loader (phasewright run, qemu-riscv32) has set sp and
# zeroed .bss; _start aligns sp to the 16 bytes the RISC-V psABI requires, calls main and exits
# with its return value.
        .section .text.start, "ax"
        .globl  _start
_start:
        andi    sp, sp, -16
        call    main
        call    pw_exit
1:      j       1b

        .text
# long pw_write(int fd, const void *buf, unsigned long len): Linux write, system call 64.
        .globl  pw_write
pw_write:
        li      a7, 64
        ecall
        ret

# void pw_exit(int code): Linux exit, system call 93.
        .globl  pw_exit
pw_exit:
        li      a7, 93
        ecall
2:      j       2b
`;

export const headerName = 'phasewright.h';

export const headerFile = `/* phasewright.h: what \`phasewright compile\` links into a C program. There is no C library:
   output goes through pw_write (file descriptor 1 is stdout, 2 is stderr); main's return value
   becomes the exit code. Only RV32I instructions: * and / come from libgcc's software routines. */
#ifndef PHASEWRIGHT_H
#define PHASEWRIGHT_H

#include <stddef.h>

long pw_write(int fd, const void *buf, unsigned long len);
void pw_exit(int code) __attribute__((noreturn));
/* Writes a NUL-terminated string to stdout; returns the bytes written. */
long pw_print(const char *text);

void *memcpy(void *dest, const void *src, size_t n);
void *memmove(void *dest, const void *src, size_t n);
void *memset(void *dest, int c, size_t n);
int memcmp(const void *a, const void *b, size_t n);

#endif
`;

export const runtimeFile = `/* The few functions gcc may call in freestanding code, and pw_print. Compiled with
   -fno-tree-loop-distribute-patterns so these loops are not turned into calls to themselves. */
#include "phasewright.h"

long pw_print(const char *text) {
  unsigned long n = 0;
  while (text[n]) n++;
  return pw_write(1, text, n);
}

void *memcpy(void *dest, const void *src, size_t n) {
  unsigned char *d = dest;
  const unsigned char *s = src;
  while (n--) *d++ = *s++;
  return dest;
}

void *memmove(void *dest, const void *src, size_t n) {
  unsigned char *d = dest;
  const unsigned char *s = src;
  if (d < s) while (n--) *d++ = *s++;
  else while (n--) d[n] = s[n];
  return dest;
}

void *memset(void *dest, int c, size_t n) {
  unsigned char *d = dest;
  while (n--) *d++ = (unsigned char)c;
  return dest;
}

int memcmp(const void *a, const void *b, size_t n) {
  const unsigned char *x = a, *y = b;
  for (; n--; x++, y++) if (*x != *y) return *x - *y;
  return 0;
}
`;

/**
 * The image starts at 0x00010000: qemu-riscv32 user mode cannot map the lowest 64 KiB (the
 * host's vm.mmap_min_addr). `_start` goes first. The linker makes the segments, so a program
 * without data gets no empty data segment (qemu refuses one at address 0).
 */
export const linkerScript = `OUTPUT_ARCH(riscv)
ENTRY(_start)
SECTIONS
{
  . = 0x00010000;
  .text : { *(.text.start) *(.text .text.*) }
  .rodata : { *(.rodata .rodata.* .srodata .srodata.*) }
  . = ALIGN(0x1000);
  .data : { *(.data .data.* .sdata .sdata.*) }
  .bss : { *(.sbss .sbss.* .bss .bss.* COMMON) }
  /DISCARD/ : { *(.comment) *(.note*) *(.eh_frame*) }
}
`;

/**
 * What every source is compiled and linked with. `-Wl,--no-relax`: without it the linker
 * relaxes accesses against gp, which nothing here sets up. `-ffreestanding -nostdlib`: no C
 * library, no start files of the toolchain's own.
 */
export const compileFlags = ['-march=rv32i', '-mabi=ilp32', '-static', '-nostdlib', '-ffreestanding', '-fno-tree-loop-distribute-patterns', '-Wl,--no-relax', '-O1'];
