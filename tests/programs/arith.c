/* Multiplication and division in software (RV32I has no M extension, so gcc calls libgcc's
   __mulsi3, __divsi3, __udivsi3, __modsi3, __umodsi3 and the 64-bit __muldi3/__udivdi3/__umoddi3).
   Prints products, quotients and remainders over a table of edge values and checks the identity
   (a / b) * b + a % b == a that C99 6.5.5 requires of truncating division. 20! = 2432902008176640000
   (a standard table value) checks 64-bit multiplication and printing.
   Exit code: number of failed checks. */
#include "lib.h"

static const int32_t values[] = {
  0, 1, -1, 2, -2, 7, -7, 10, 255, -256, 12345, -98765, 65536, 0x7FFF, -0x8000,
  0x7FFFFFFF, (int32_t)0x80000000, (int32_t)0x80000001, 0x12345678, (int32_t)0xDEADBEEF,
};
#define VALUE_COUNT (sizeof values / sizeof values[0])

/* The compiler must not fold the arithmetic at compile time: read the table through volatile. */
static int32_t value_at(unsigned index) {
  return ((volatile const int32_t *)values)[index];
}

int main(void) {
  int failures = 0;
  uint32_t mix = 0;
  for (unsigned i = 0; i < VALUE_COUNT; i++) {
    for (unsigned j = 0; j < VALUE_COUNT; j++) {
      int32_t a = value_at(i), b = value_at(j);
      uint32_t ua = (uint32_t)a, ub = (uint32_t)b;
      uint32_t product = ua * ub;
      mix = (mix << 5 | mix >> 27) ^ product;
      if (b == 0) continue;
      uint32_t uq = ua / ub, ur = ua % ub;
      if (uq * ub + ur != ua || ur >= ub) failures++;
      mix = (mix << 5 | mix >> 27) ^ uq ^ (ur << 1);
      if (a == (int32_t)0x80000000 && b == -1) continue; /* overflows: undefined in C */
      int32_t q = a / b, r = a % b;
      if (q * b + r != a) failures++;
      mix = (mix << 5 | mix >> 27) ^ (uint32_t)q ^ ((uint32_t)r << 2);
      if (i == j || j == 3 || j == 6) {
        print_dec(a);
        print_str(" / ");
        print_dec(b);
        print_str(" = ");
        print_dec(q);
        print_str(" rem ");
        print_dec(r);
        print_str("; unsigned ");
        print_udec(uq);
        print_str(" rem ");
        print_udec(ur);
        print_str("; product 0x");
        print_hex(product);
        print_char('\n');
      }
    }
  }
  report_hex("mix", mix);

  uint64_t factorial = 1;
  for (uint32_t n = 1; n <= 20; n++) factorial *= n;
  print_str("20! = ");
  print_udec64(factorial);
  print_char('\n');
  if (factorial != 2432902008176640000ull) failures++;
  uint64_t big = 0xFEDCBA9876543210ull;
  print_str("0xfedcba9876543210 / 1000003 = ");
  print_udec64(big / 1000003u);
  print_str(" rem ");
  print_udec64(big % 1000003u);
  print_char('\n');
  if ((big / 1000003u) * 1000003u + big % 1000003u != big) failures++;

  report_dec("failures", failures);
  return failures;
}
