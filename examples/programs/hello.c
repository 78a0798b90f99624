/* A first RV32I program for a control table: prints a line, adds up 1..10 and returns 0
   (the exit code) when the sum is 55. Build it with `phasewright compile`, then run it with
   `phasewright run`. */
#include "phasewright.h"

int main(void) {
  int sum = 0;
  for (int i = 1; i <= 10; i++) sum += i;
  pw_print("hello from the control table\n");
  return sum == 55 ? 0 : 1;
}
