/* CRC-32 and a prime sieve, checked against published values.
   - CRC-32 (reflected polynomial 0xEDB88320, initial value and final XOR 0xFFFFFFFF) of the nine
     ASCII bytes "123456789" is 0xCBF43926: the "check" value of CRC-32/ISO-HDLC in the public
     catalogue of parametrised CRC algorithms (common practice, also ITU-T V.42 / IEEE 802.3 CRC).
   - There are 1229 primes below 10000 (pi(10^4) = 1229, a standard table value).
   A bit-by-bit CRC is compared with a table-driven one over a pseudo-random 4 KiB buffer.
   Exit code: number of failed checks (0 = all good). */
#include "lib.h"

static uint32_t crc32_bitwise(const uint8_t *data, uint32_t lengthBytes) {
  uint32_t crc = 0xFFFFFFFFu;
  for (uint32_t i = 0; i < lengthBytes; i++) {
    crc ^= data[i];
    for (int bit = 0; bit < 8; bit++) crc = (crc >> 1) ^ (0xEDB88320u & (0u - (crc & 1u)));
  }
  return crc ^ 0xFFFFFFFFu;
}

static uint32_t crc_table[256];

static void crc32_make_table(void) {
  for (uint32_t n = 0; n < 256; n++) {
    uint32_t c = n;
    for (int bit = 0; bit < 8; bit++) c = (c & 1) ? 0xEDB88320u ^ (c >> 1) : c >> 1;
    crc_table[n] = c;
  }
}

static uint32_t crc32_table(const uint8_t *data, uint32_t lengthBytes) {
  uint32_t crc = 0xFFFFFFFFu;
  for (uint32_t i = 0; i < lengthBytes; i++) crc = crc_table[(crc ^ data[i]) & 0xFF] ^ (crc >> 8);
  return crc ^ 0xFFFFFFFFu;
}

static uint8_t buffer[4096];
static uint8_t composite[10000];

int main(void) {
  int failures = 0;
  static const char check_input[] = "123456789";
  uint32_t crc = crc32_bitwise((const uint8_t *)check_input, 9);
  report_hex("crc32(\"123456789\")", crc);
  if (crc != 0xCBF43926u) failures++;

  crc32_make_table();
  report_hex("crc_table[1]", crc_table[1]);
  report_hex("crc_table[255]", crc_table[255]);
  uint32_t seed = 12345;
  for (uint32_t i = 0; i < sizeof buffer; i++) {
    seed = seed * 1103515245u + 12345u;   /* software multiply through libgcc */
    buffer[i] = (uint8_t)(seed >> 16);
  }
  uint32_t slow = crc32_bitwise(buffer, sizeof buffer);
  uint32_t fast = crc32_table(buffer, sizeof buffer);
  report_hex("crc32(buffer) bitwise", slow);
  report_hex("crc32(buffer) table", fast);
  if (slow != fast) failures++;

  uint32_t primes = 0, sum = 0;
  for (uint32_t n = 2; n < 10000; n++) {
    if (composite[n]) continue;
    primes++;
    sum += n;
    for (uint32_t m = n * n; m < 10000; m += n) composite[m] = 1;
  }
  report_dec("primes below 10000", (int32_t)primes);
  report_dec("sum of primes below 10000", (int32_t)sum);
  if (primes != 1229) failures++;

  report_dec("failures", failures);
  return failures;
}
