/* Runtime for the C test programs; see lib.h. Output is collected in a buffer and written at
   each newline, so every printed line costs one write system call. */
#include "lib.h"

static char out_buffer[128];
static unsigned out_used;

void print_flush(void) {
  if (out_used > 0) sys_write(1, out_buffer, out_used);
  out_used = 0;
}

void print_char(char c) {
  if (out_used == sizeof out_buffer) print_flush();
  out_buffer[out_used++] = c;
  if (c == '\n') print_flush();
}

void print_str(const char *text) {
  while (*text) print_char(*text++);
}

void print_hex(uint32_t value) {
  for (int shift = 28; shift >= 0; shift -= 4) print_char("0123456789abcdef"[(value >> shift) & 15]);
}

void print_udec(uint32_t value) {
  char digits[10];
  int count = 0;
  do {
    digits[count++] = (char)('0' + value % 10);
    value /= 10;
  } while (value != 0);
  while (count > 0) print_char(digits[--count]);
}

void print_dec(int32_t value) {
  if (value < 0) {
    print_char('-');
    print_udec(0u - (uint32_t)value);
  } else {
    print_udec((uint32_t)value);
  }
}

void print_udec64(uint64_t value) {
  char digits[20];
  int count = 0;
  do {
    digits[count++] = (char)('0' + (int)(value % 10));
    value /= 10;
  } while (value != 0);
  while (count > 0) print_char(digits[--count]);
}

void report_hex(const char *label, uint32_t value) {
  print_str(label);
  print_str(" 0x");
  print_hex(value);
  print_char('\n');
}

void report_dec(const char *label, int32_t value) {
  print_str(label);
  print_char(' ');
  print_dec(value);
  print_char('\n');
}

void exit_program(int code) {
  print_flush();
  sys_exit(code);
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
  if (d < s) {
    while (n--) *d++ = *s++;
  } else {
    while (n--) d[n] = s[n];
  }
  return dest;
}

void *memset(void *dest, int c, size_t n) {
  unsigned char *d = dest;
  while (n--) *d++ = (unsigned char)c;
  return dest;
}

int memcmp(const void *a, const void *b, size_t n) {
  const unsigned char *x = a, *y = b;
  for (; n; n--, x++, y++) {
    if (*x != *y) return *x - *y;
  }
  return 0;
}
