/* Shared helpers of the scalar C references: read the input written by the
 * benchmark script, time a kernel with clock_gettime, report the median. */
#include <stdint.h>
#include <stdio.h>
#include <stdlib.h>
#include <time.h>

/* Input: int64 n, then x (2n doubles, interleaved re/im), then y (2n doubles). */
static double *read_input(const char *path, int64_t *n) {
  FILE *f = fopen(path, "rb");
  if (!f || fread(n, sizeof *n, 1, f) != 1) { fprintf(stderr, "cannot read %s\n", path); exit(1); }
  double *d = malloc(sizeof(double) * 4 * (size_t)*n);
  if (fread(d, sizeof(double), 4 * (size_t)*n, f) != 4 * (size_t)*n) { fprintf(stderr, "short input\n"); exit(1); }
  fclose(f);
  return d;
}

static double now(void) {
  struct timespec t;
  clock_gettime(CLOCK_MONOTONIC, &t);
  return t.tv_sec + t.tv_nsec * 1e-9;
}

static int cmp(const void *a, const void *b) {
  double x = *(const double *)a, y = *(const double *)b;
  return (x > y) - (x < y);
}

/* Prints "median min max checksum" in symbols per second. */
static void print_rates(double *rates, int runs, double checksum) {
  qsort(rates, runs, sizeof *rates, cmp);
  printf("%.6g %.6g %.6g %.17g\n", rates[runs / 2], rates[0], rates[runs - 1], checksum);
}
