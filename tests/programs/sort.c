/* Sorting signed and unsigned 8-, 16- and 32-bit arrays: the compiler uses LB/LBU/LH/LHU/LW and
   SB/SH/SW with signed and unsigned comparisons, and a recursive quicksort uses the stack.
   Each array is checked to be in order and to keep its element sum.
   Exit code: number of arrays that failed. */
#include "lib.h"

#define N 300

static int32_t words[N];
static int16_t halves[N];
static uint16_t uhalves[N];
static int8_t bytes[N];
static uint8_t ubytes[N];

static uint32_t seed = 2463534242u;
static uint32_t next_random(void) {   /* xorshift32, shifts only */
  seed ^= seed << 13;
  seed ^= seed >> 17;
  seed ^= seed << 5;
  return seed;
}

static void quicksort(int32_t *a, int low, int high) {
  while (low < high) {
    int32_t pivot = a[(low + high) >> 1];
    int i = low, j = high;
    while (i <= j) {
      while (a[i] < pivot) i++;
      while (a[j] > pivot) j--;
      if (i <= j) {
        int32_t t = a[i];
        a[i] = a[j];
        a[j] = t;
        i++;
        j--;
      }
    }
    if (j - low < high - i) {
      quicksort(a, low, j);
      low = i;
    } else {
      quicksort(a, i, high);
      high = j;
    }
  }
}

#define INSERTION_SORT(name, type)                         \
  static void name(type *a, int n) {                       \
    for (int i = 1; i < n; i++) {                          \
      type v = a[i];                                       \
      int j = i - 1;                                       \
      while (j >= 0 && a[j] > v) {                         \
        a[j + 1] = a[j];                                   \
        j--;                                               \
      }                                                    \
      a[j + 1] = v;                                        \
    }                                                      \
  }
INSERTION_SORT(sort_halves, int16_t)
INSERTION_SORT(sort_uhalves, uint16_t)
INSERTION_SORT(sort_bytes, int8_t)
INSERTION_SORT(sort_ubytes, uint8_t)

#define CHECK_SORTED(label, array, sum_before)                     \
  do {                                                             \
    uint32_t sum_after = 0;                                        \
    int ordered = 1;                                               \
    for (int i = 0; i < N; i++) {                                  \
      sum_after += (uint32_t)array[i];                             \
      if (i > 0 && array[i - 1] > array[i]) ordered = 0;           \
    }                                                              \
    print_str(label);                                              \
    print_str(" min ");                                            \
    print_dec(array[0]);                                           \
    print_str(" max ");                                            \
    print_dec(array[N - 1]);                                       \
    print_str(" sum 0x");                                          \
    print_hex(sum_after);                                          \
    print_str(ordered ? " ordered\n" : " NOT ORDERED\n");          \
    if (!ordered || sum_after != sum_before) failures++;           \
  } while (0)

int main(void) {
  int failures = 0;
  uint32_t sums[5] = {0, 0, 0, 0, 0};  /* unsigned: wrap-around is defined */
  for (int i = 0; i < N; i++) {
    uint32_t r = next_random();
    words[i] = (int32_t)r;
    halves[i] = (int16_t)(r >> 7);
    uhalves[i] = (uint16_t)(r >> 11);
    bytes[i] = (int8_t)(r >> 3);
    ubytes[i] = (uint8_t)(r >> 21);
    sums[0] += (uint32_t)words[i];
    sums[1] += (uint32_t)halves[i];
    sums[2] += (uint32_t)uhalves[i];
    sums[3] += (uint32_t)bytes[i];
    sums[4] += (uint32_t)ubytes[i];
  }
  words[0] = (int32_t)0x80000000;   /* the extremes must sort to the ends */
  words[1] = 0x7FFFFFFF;
  sums[0] = 0;
  for (int i = 0; i < N; i++) sums[0] += (uint32_t)words[i];

  quicksort(words, 0, N - 1);
  sort_halves(halves, N);
  sort_uhalves(uhalves, N);
  sort_bytes(bytes, N);
  sort_ubytes(ubytes, N);
  CHECK_SORTED("int32", words, sums[0]);
  CHECK_SORTED("int16", halves, sums[1]);
  CHECK_SORTED("uint16", uhalves, sums[2]);
  CHECK_SORTED("int8", bytes, sums[3]);
  CHECK_SORTED("uint8", ubytes, sums[4]);
  if (words[0] != (int32_t)0x80000000 || words[N - 1] != 0x7FFFFFFF) failures++;
  report_dec("failures", failures);
  return failures;
}
