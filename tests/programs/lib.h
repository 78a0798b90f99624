/* Tiny runtime for the C test programs: system calls, buffered printing of strings, hex and
   decimal numbers, and the memory functions gcc may call even in freestanding code. Printing
   uses only RV32I instructions plus libgcc's software division. */
#ifndef PHASEWRIGHT_TEST_LIB_H
#define PHASEWRIGHT_TEST_LIB_H

#include <stdint.h>
#include <stddef.h>

long sys_write(int fd, const void *buf, unsigned long len);
void sys_exit(int code) __attribute__((noreturn));
/* Flushes the output buffer and exits with `code` (main's return value goes here). */
void exit_program(int code) __attribute__((noreturn));

void print_char(char c);
void print_str(const char *text);
void print_hex(uint32_t value);            /* 8 lower-case hex digits, no prefix */
void print_udec(uint32_t value);
void print_dec(int32_t value);
void print_udec64(uint64_t value);
void print_flush(void);
/* "label value\n" helpers used by every program's report lines. */
void report_hex(const char *label, uint32_t value);
void report_dec(const char *label, int32_t value);

void *memcpy(void *dest, const void *src, size_t n);
void *memmove(void *dest, const void *src, size_t n);
void *memset(void *dest, int c, size_t n);
int memcmp(const void *a, const void *b, size_t n);

#endif
