/* Scalar reference of blind phase search for square 16QAM at unit power, for
 * the benchmarks only (Pfau, Hoffmann and Noé, J. Lightwave Technol. 27(8),
 * 2009): B test phases φb = (b/B − 1/2)·π/2; for every symbol the squared
 * distance to the nearest point after rotation by φb, summed over the
 * 2N+1 symbols around it (a running sum), and the phase of the smallest sum
 * applied. Per polarization, both polarizations timed together.
 * Usage: bps INPUT B N RUNS  → median min max symbols/s, checksum */
#include <math.h>
#include "common.h"

static double slice(double v) {
  /* nearest of ±1, ±3 (scaled by 1/sqrt(10) by the caller) */
  double s = v < 0 ? -1 : 1, a = fabs(v);
  return s * (a < 2 ? 1 : 3);
}

static double pol(const double *z, int64_t n, int B, int N, double *dist, double *sum, double *cs) {
  const double g = sqrt(10.0), ig = 1 / sqrt(10.0);
  double check = 0;
  for (int64_t k = 0; k < n; k++) {
    double re = z[2 * k] * g, im = z[2 * k + 1] * g;
    for (int b = 0; b < B; b++) {
      double c = cs[2 * b], s = cs[2 * b + 1];
      double rr = re * c - im * s, ri = re * s + im * c;
      double er = rr - slice(rr), ei = ri - slice(ri);
      dist[k * B + b] = er * er + ei * ei;
    }
  }
  for (int b = 0; b < B; b++) sum[b] = 0;
  for (int64_t k = 0; k < N && k < n; k++)
    for (int b = 0; b < B; b++) sum[b] += dist[k * B + b];
  for (int64_t k = 0; k < n; k++) {
    /* running sum over [k − N, k + N] */
    if (k + N < n) for (int b = 0; b < B; b++) sum[b] += dist[(k + N) * B + b];
    if (k - N - 1 >= 0) for (int b = 0; b < B; b++) sum[b] -= dist[(k - N - 1) * B + b];
    int best = 0;
    for (int b = 1; b < B; b++) if (sum[b] < sum[best]) best = b;
    double c = cs[2 * best], s = cs[2 * best + 1];
    double re = z[2 * k], im = z[2 * k + 1];
    check += (re * c - im * s) * ig + (re * s + im * c);
  }
  return check;
}

int main(int argc, char **argv) {
  if (argc < 5) { fprintf(stderr, "usage: bps INPUT B N RUNS\n"); return 2; }
  int64_t n;
  double *d = read_input(argv[1], &n);
  int B = atoi(argv[2]), N = atoi(argv[3]), runs = atoi(argv[4]);
  if (runs > 64) runs = 64;
  double *dist = malloc(sizeof(double) * B * (size_t)n), *sum = malloc(sizeof(double) * B), *cs = malloc(sizeof(double) * 2 * B);
  const double pi = acos(-1.0);
  for (int b = 0; b < B; b++) {
    double phi = ((double)b / B - 0.5) * pi / 2;
    cs[2 * b] = cos(phi);
    cs[2 * b + 1] = sin(phi);
  }
  double rates[64], check = 0;
  pol(d, n, B, N, dist, sum, cs); /* warm-up */
  for (int r = 0; r < runs; r++) {
    double t0 = now();
    check = pol(d, n, B, N, dist, sum, cs) + pol(d + 2 * n, n, B, N, dist, sum, cs);
    rates[r] = (double)n / (now() - t0);
  }
  print_rates(rates, runs, check);
  return 0;
}
