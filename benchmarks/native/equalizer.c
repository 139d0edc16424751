/* Scalar reference of the 2x2 butterfly equalizer with the CMA update, for
 * the benchmarks only: T taps at 2 samples per symbol, one output symbol per
 * two input samples, the taps updated after every symbol:
 *   zx = hxx·x + hxy·y,  zy = hyx·x + hyy·y       (inner products over T taps)
 *   ex = zx (R2 − |zx|²),  h_x· += mu · ex · conj(input)   (same for y)
 * Usage: equalizer INPUT TAPS MU R2 RUNS  → median min max symbols/s, checksum */
#include "common.h"

static double kernel(const double *x, const double *y, int64_t n, int T, double mu, double r2, double *h) {
  /* h: hxx, hxy, hyx, hyy, each T complex taps, centre spike on hxx, hyy. */
  for (int k = 0; k < 8 * T; k++) h[k] = 0;
  h[2 * (T / 2)] = 1;
  h[6 * T + 2 * (T / 2)] = 1;
  double *hxx = h, *hxy = h + 2 * T, *hyx = h + 4 * T, *hyy = h + 6 * T;
  double check = 0;
  for (int64_t s = 0; 2 * s + T <= n; s++) {
    const double *a = x + 4 * s, *b = y + 4 * s;
    double xr = 0, xi = 0, yr = 0, yi = 0;
    for (int k = 0; k < T; k++) {
      double ar = a[2 * k], ai = a[2 * k + 1], br = b[2 * k], bi = b[2 * k + 1];
      xr += hxx[2 * k] * ar - hxx[2 * k + 1] * ai + hxy[2 * k] * br - hxy[2 * k + 1] * bi;
      xi += hxx[2 * k] * ai + hxx[2 * k + 1] * ar + hxy[2 * k] * bi + hxy[2 * k + 1] * br;
      yr += hyx[2 * k] * ar - hyx[2 * k + 1] * ai + hyy[2 * k] * br - hyy[2 * k + 1] * bi;
      yi += hyx[2 * k] * ai + hyx[2 * k + 1] * ar + hyy[2 * k] * bi + hyy[2 * k + 1] * br;
    }
    double dx = mu * (r2 - (xr * xr + xi * xi)), dy = mu * (r2 - (yr * yr + yi * yi));
    double exr = dx * xr, exi = dx * xi, eyr = dy * yr, eyi = dy * yi;
    for (int k = 0; k < T; k++) {
      double ar = a[2 * k], ai = a[2 * k + 1], br = b[2 * k], bi = b[2 * k + 1];
      /* h += e · conj(input) */
      hxx[2 * k] += exr * ar + exi * ai; hxx[2 * k + 1] += exi * ar - exr * ai;
      hxy[2 * k] += exr * br + exi * bi; hxy[2 * k + 1] += exi * br - exr * bi;
      hyx[2 * k] += eyr * ar + eyi * ai; hyx[2 * k + 1] += eyi * ar - eyr * ai;
      hyy[2 * k] += eyr * br + eyi * bi; hyy[2 * k + 1] += eyi * br - eyr * bi;
    }
    check += xr + yi;
  }
  return check;
}

int main(int argc, char **argv) {
  if (argc < 6) { fprintf(stderr, "usage: equalizer INPUT TAPS MU R2 RUNS\n"); return 2; }
  int64_t n;
  double *d = read_input(argv[1], &n);
  int T = atoi(argv[2]), runs = atoi(argv[5]);
  double mu = atof(argv[3]), r2 = atof(argv[4]);
  double *h = malloc(sizeof(double) * 8 * T), rates[64], check = 0;
  if (runs > 64) runs = 64;
  kernel(d, d + 2 * n, n, T, mu, r2, h); /* warm-up */
  for (int r = 0; r < runs; r++) {
    double t0 = now();
    check = kernel(d, d + 2 * n, n, T, mu, r2, h);
    rates[r] = (double)((n - T) / 2 + 1) / (now() - t0);
  }
  print_rates(rates, runs, check);
  return 0;
}
