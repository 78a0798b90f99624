/* Long-running mixed workload for speed measurements and long lock-step runs. Each round runs a
   table CRC-32 over 2 KiB, a byte sieve to 4096, a 12x12 integer matrix product (software
   multiply via libgcc) and a shell sort of 256 words, and folds every result into a checksum.
   BENCH_ROUNDS (compile with -DBENCH_ROUNDS=n) sets the amount of work: the default runs well
   over ten million instructions, BENCH_ROUNDS=1 is a short version for tests.
   Prints the checksum; exit code 0. */
#include "lib.h"

#ifndef BENCH_ROUNDS
#define BENCH_ROUNDS 40
#endif

#define MATRIX 12
#define SORT_WORDS 256

static uint32_t crc_table[256];
static uint8_t data[2048];
static uint8_t composite[4096];
static int32_t ma[MATRIX][MATRIX], mb[MATRIX][MATRIX], mc[MATRIX][MATRIX];
static uint32_t sort_buffer[SORT_WORDS];

static uint32_t state = 0x9E3779B9u;
static uint32_t next_random(void) {
  state ^= state << 13;
  state ^= state >> 17;
  state ^= state << 5;
  return state;
}

static uint32_t crc32(const uint8_t *p, uint32_t n) {
  uint32_t crc = 0xFFFFFFFFu;
  while (n--) crc = crc_table[(crc ^ *p++) & 0xFF] ^ (crc >> 8);
  return ~crc;
}

static uint32_t sieve(void) {
  uint32_t count = 0;
  memset(composite, 0, sizeof composite);
  for (uint32_t n = 2; n < sizeof composite; n++) {
    if (composite[n]) continue;
    count += n;
    for (uint32_t m = n + n; m < sizeof composite; m += n) composite[m] = 1;
  }
  return count;
}

static uint32_t matrix(void) {
  for (int i = 0; i < MATRIX; i++)
    for (int j = 0; j < MATRIX; j++) {
      ma[i][j] = (int32_t)(next_random() % 2001u) - 1000;
      mb[i][j] = (int32_t)(next_random() % 2001u) - 1000;
    }
  uint32_t trace = 0;
  for (int i = 0; i < MATRIX; i++)
    for (int j = 0; j < MATRIX; j++) {
      int32_t sum = 0;
      for (int k = 0; k < MATRIX; k++) sum += ma[i][k] * mb[k][j];
      mc[i][j] = sum;
      trace = trace * 31u + (uint32_t)sum;
    }
  return trace;
}

static uint32_t shell_sort(void) {
  for (int i = 0; i < SORT_WORDS; i++) sort_buffer[i] = next_random();
  for (int gap = SORT_WORDS / 2; gap > 0; gap /= 2)
    for (int i = gap; i < SORT_WORDS; i++) {
      uint32_t v = sort_buffer[i];
      int j = i;
      while (j >= gap && sort_buffer[j - gap] > v) {
        sort_buffer[j] = sort_buffer[j - gap];
        j -= gap;
      }
      sort_buffer[j] = v;
    }
  uint32_t folded = 0;
  for (int i = 0; i < SORT_WORDS; i++) folded = (folded << 3 | folded >> 29) ^ sort_buffer[i];
  return folded;
}

int main(void) {
  for (uint32_t n = 0; n < 256; n++) {
    uint32_t c = n;
    for (int bit = 0; bit < 8; bit++) c = (c & 1) ? 0xEDB88320u ^ (c >> 1) : c >> 1;
    crc_table[n] = c;
  }
  uint32_t checksum = 0;
  for (int round = 0; round < BENCH_ROUNDS; round++) {
    for (uint32_t i = 0; i < sizeof data; i++) data[i] = (uint8_t)next_random();
    checksum = (checksum << 1 | checksum >> 31) ^ crc32(data, sizeof data);
    checksum = (checksum << 1 | checksum >> 31) ^ sieve();
    checksum = (checksum << 1 | checksum >> 31) ^ matrix();
    checksum = (checksum << 1 | checksum >> 31) ^ shell_sort();
  }
  report_dec("rounds", BENCH_ROUNDS);
  report_hex("checksum", checksum);
  return 0;
}
