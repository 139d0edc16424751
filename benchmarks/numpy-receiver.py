#!/usr/bin/env python3
"""A plain numpy/scipy receiver of the same chain as Intradyne's default one,
for the throughput comparison of benchmarks/versus-numpy.mjs (a benchmark
reference only: it is not part of the library and no test depends on it).

Written as an engineer writes a first receiver with numpy and scipy: the
vector operations vectorized (FFT dispersion compensation, resampling, the
matched filter, the fourth-power frequency estimate, blind phase search over
a moving window, the synchronization by FFT correlation), the recursive ones
(Gardner clock recovery, the adaptive 2×2 equalizer) as loops over symbols
with numpy on the taps. It reads the capture's CSV and descriptor, runs the
chain and prints one JSON line: the BER, how long each step took, the CPU
time and the peak resident memory.

Usage: numpy-receiver.py CAPTURE.csv
"""
import json
import os
import resource
import sys
import time

import numpy as np
from scipy import signal


def main(path):
    t = {}
    clock = time.perf_counter()

    def lap(name):
        nonlocal clock
        now = time.perf_counter()
        t[name] = now - clock
        clock = now

    descriptor = json.load(open(os.path.splitext(path)[0] + '.json'))
    fs, rs = descriptor['sampleRate'], descriptor['symbolRate']
    rolloff = descriptor.get('rollOff', 0.1)
    cd = descriptor.get('dispersionPsPerNm', 0.0)
    data = np.loadtxt(path, delimiter=',', comments='#', skiprows=1 + header_comments(path))
    ref = np.loadtxt(os.path.join(os.path.dirname(path), descriptor['reference']), delimiter=',', comments='#', skiprows=1)
    lap('read')

    # Front end: DC, power, Gram-Schmidt per polarization.
    ch = data[:, :4] - data[:, :4].mean(axis=0)
    ch /= np.sqrt((ch ** 2).mean(axis=0))
    fields = []
    for i, q in ((ch[:, 0], ch[:, 1]), (ch[:, 2], ch[:, 3])):
        q = q - (np.dot(i, q) / np.dot(i, i)) * i
        q /= np.sqrt((q ** 2).mean())
        fields.append(i + 1j * q)
    x, y = fields
    lap('front end')

    # Resample to 2 samples per symbol.
    from fractions import Fraction
    ratio = Fraction(2 * rs / fs).limit_denominator(1000)
    x = signal.resample_poly(x, ratio.numerator, ratio.denominator)
    y = signal.resample_poly(y, ratio.numerator, ratio.denominator)
    lap('resample')

    # Chromatic dispersion, in the frequency domain over the whole capture.
    c, lam = 299792458.0, 1550e-9
    f = np.fft.fftfreq(len(x), 1 / (2 * rs))
    h = np.exp(1j * np.pi * lam ** 2 * cd * 1e-3 * f ** 2 / c)
    x = np.fft.ifft(np.fft.fft(x) * h)
    y = np.fft.ifft(np.fft.fft(y) * h)
    lap('dispersion')

    # Coarse frequency offset: the fourth-power spectrum's peak.
    n4 = 1 << 16
    p = np.abs(np.fft.fft(x[:n4] ** 4)) ** 2 + np.abs(np.fft.fft(y[:n4] ** 4)) ** 2
    fo = np.fft.fftfreq(n4, 1 / (2 * rs))[np.argmax(p)] / 4
    rot = np.exp(-2j * np.pi * fo * np.arange(len(x)) / (2 * rs))
    x, y = x * rot, y * rot
    lap('frequency offset')

    # Root-raised-cosine matched filter.
    taps = rrc(rolloff, 2, 32)
    x = np.convolve(x, taps, mode='same')
    y = np.convolve(y, taps, mode='same')
    lap('matched filter')

    # Gardner clock recovery (linear interpolation, proportional-integral loop).
    x, y = gardner(x, y)
    lap('clock recovery')

    # 2×2 equalizer: CMA, then RDE on the rings of 16QAM.
    xs, ys = equalize(x, y, descriptor['modulation'])
    lap('equalizer')

    # Blind phase search over both polarizations, 32 test phases, 2N + 1 = 65 symbols.
    xs, ys = bps(xs, ys, descriptor['modulation'])
    lap('carrier phase')

    ber = measure(xs, ys, ref, descriptor['modulation'])
    lap('measure')
    usage = resource.getrusage(resource.RUSAGE_SELF)
    print(json.dumps({
        'ber': ber,
        'seconds': t,
        'total': sum(t.values()),
        'symbols': len(xs),
        'cpuSeconds': usage.ru_utime + usage.ru_stime,
        'maxRssMB': usage.ru_maxrss / 1024,
    }))


def header_comments(path):
    with open(path) as f:
        n = 0
        for line in f:
            if line.startswith('#'):
                n += 1
            else:
                return n
    return n


def rrc(beta, sps, span):
    t = np.arange(-span * sps, span * sps + 1) / sps
    h = np.zeros_like(t)
    for i, ti in enumerate(t):
        if abs(ti) < 1e-12:
            h[i] = 1 + beta * (4 / np.pi - 1)
        elif abs(abs(4 * beta * ti) - 1) < 1e-9:
            h[i] = beta / np.sqrt(2) * ((1 + 2 / np.pi) * np.sin(np.pi / (4 * beta)) + (1 - 2 / np.pi) * np.cos(np.pi / (4 * beta)))
        else:
            h[i] = (np.sin(np.pi * ti * (1 - beta)) + 4 * beta * ti * np.cos(np.pi * ti * (1 + beta))) / (np.pi * ti * (1 - (4 * beta * ti) ** 2))
    return h / np.sqrt(np.sum(h ** 2))


def cubic(v, i, a):
    """v at i + a by the cubic Lagrange polynomial through v[i − 1 … i + 2]."""
    p0, p1, p2, p3 = v[i - 1], v[i], v[i + 1], v[i + 2]
    return p1 + a * (-p0 / 3 - p1 / 2 + p2 - p3 / 6 + a * ((p0 + p2) / 2 - p1 + a * ((p3 - p0) / 6 + (p1 - p2) / 2)))


def gardner(x, y, bn=1e-4):
    zeta = 1 / np.sqrt(2)
    th = bn / (zeta + 1 / (4 * zeta))
    kp = 0.3
    k1 = 4 * zeta * th / ((1 + 2 * zeta * th + th * th) * kp)
    k2 = 4 * th * th / ((1 + 2 * zeta * th + th * th) * kp)
    n = len(x) // 2 - 3
    ox = np.zeros(2 * n, dtype=complex)
    oy = np.zeros(2 * n, dtype=complex)
    tau, integ, prev_x, prev_y = 0.0, 0.0, 0j, 0j
    power = np.mean(np.abs(x[:2048]) ** 2 + np.abs(y[:2048]) ** 2)
    for k in range(1, n):
        pos = 2 * k + tau
        i = int(pos)
        a = pos - i
        if i + 3 >= len(x) or i < 2:
            break
        ax, ay = cubic(x, i, a), cubic(y, i, a)
        mx, my = cubic(x, i - 1, a), cubic(y, i - 1, a)
        e = (np.real(np.conj(mx) * (ax - prev_x)) + np.real(np.conj(my) * (ay - prev_y))) / power
        integ += k2 * e
        tau -= 2 * (k1 * e + integ)
        ox[2 * k], oy[2 * k] = ax, ay
        ox[2 * k + 1], oy[2 * k + 1] = cubic(x, i + 1, a), cubic(y, i + 1, a)
        prev_x, prev_y = ax, ay
    return ox, oy


def constellation(modulation):
    m = {'qpsk': 4, '16qam': 16, '64qam': 64}[modulation]
    L = int(np.sqrt(m))
    levels = np.arange(-(L - 1), L, 2)
    pts = (levels[:, None] + 1j * levels[None, :]).ravel()
    return pts / np.sqrt(np.mean(np.abs(pts) ** 2)), levels / np.sqrt(np.mean(np.abs(pts) ** 2))


def equalize(x, y, modulation, L=15, mu_cma=1e-3, mu_rde=1e-4, pre=8192):
    pts, _ = constellation(modulation)
    r2 = np.mean(np.abs(pts) ** 4) / np.mean(np.abs(pts) ** 2)
    rings = np.unique(np.round(np.abs(pts) ** 2, 9))
    h = np.zeros((2, 2, L), dtype=complex)
    h[0, 0, L // 2] = h[1, 1, L // 2] = 1
    n = (len(x) - L) // 2
    out = np.zeros((2, n), dtype=complex)
    for k in range(n - 1):
        # The centre tap on sample 2k + 8: the symbol instants are the even samples.
        ux = x[2 * k + 1:2 * k + 1 + L][::-1]
        uy = y[2 * k + 1:2 * k + 1 + L][::-1]
        zx = h[0, 0] @ ux + h[0, 1] @ uy
        zy = h[1, 0] @ ux + h[1, 1] @ uy
        out[0, k], out[1, k] = zx, zy
        if k < pre or modulation == 'qpsk':
            ex, ey, mu = zx * (r2 - abs(zx) ** 2), zy * (r2 - abs(zy) ** 2), mu_cma
        else:
            tx = rings[np.argmin(np.abs(rings - abs(zx) ** 2))]
            ty = rings[np.argmin(np.abs(rings - abs(zy) ** 2))]
            ex, ey, mu = zx * (tx - abs(zx) ** 2), zy * (ty - abs(zy) ** 2), mu_rde
        h[0, 0] += mu * ex * np.conj(ux)
        h[0, 1] += mu * ex * np.conj(uy)
        h[1, 0] += mu * ey * np.conj(ux)
        h[1, 1] += mu * ey * np.conj(uy)
    return out[0], out[1]


def slicer(z, levels):
    i = np.clip(np.round((z.real / (levels[1] - levels[0])) + (len(levels) - 1) / 2), 0, len(levels) - 1).astype(int)
    q = np.clip(np.round((z.imag / (levels[1] - levels[0])) + (len(levels) - 1) / 2), 0, len(levels) - 1).astype(int)
    return levels[i] + 1j * levels[q]


def bps(x, y, modulation, B=32, N=32):
    _, levels = constellation(modulation)
    x = x / np.sqrt(np.mean(np.abs(x) ** 2))
    y = y / np.sqrt(np.mean(np.abs(y) ** 2))
    phases = (np.arange(B) / B - 0.5) * np.pi / 2
    d = np.zeros((B, len(x)))
    for b, phi in enumerate(phases):
        r = np.exp(-1j * phi)
        d[b] = np.abs(x * r - slicer(x * r, levels)) ** 2 + np.abs(y * r - slicer(y * r, levels)) ** 2
    c = np.cumsum(np.pad(d, ((0, 0), (N + 1, N))), axis=1)
    win = c[:, 2 * N + 1:] - c[:, :-(2 * N + 1)]
    theta = np.unwrap(phases[np.argmin(win, axis=0)] * 4) / 4
    return x * np.exp(-1j * theta), y * np.exp(-1j * theta)


def measure(x, y, ref, modulation, skip=2048):
    _, levels = constellation(modulation)
    rx = ref[:, 0] + 1j * ref[:, 1]
    ry = ref[:, 2] + 1j * ref[:, 3]
    rx, ry = rx / np.sqrt(np.mean(np.abs(rx) ** 2)), ry / np.sqrt(np.mean(np.abs(ry) ** 2))
    errors, bits = 0, 0
    m = int(np.log2(len(levels) ** 2))
    for z in (x[skip:-skip], y[skip:-skip]):
        best = None
        for r in (rx, ry):
            n = len(r)
            zz = np.resize(z, len(z))
            fold = np.zeros(n, dtype=complex)
            np.add.at(fold, np.arange(len(zz)) % n, zz)
            corr = np.fft.ifft(np.fft.fft(fold) * np.conj(np.fft.fft(r)))
            k = np.argmax(np.abs(corr))
            if best is None or abs(corr[k]) > best[0]:
                best = (abs(corr[k]), k, corr[k], r)
        _, delay, peak, r = best
        turn = np.exp(-1j * np.pi / 2 * np.round(np.angle(peak) / (np.pi / 2)))
        sent = r[(np.arange(len(z)) - delay) % len(r)]
        got = slicer(z * turn, levels)
        wrong = np.abs(got - slicer(sent, levels)) > 1e-9
        errors += int(np.sum(wrong))
        bits += len(z) * m
    # Symbol errors counted as one bit each (Gray mapping, nearest-neighbour errors): a BER figure to
    # check that the receiver worked, not a measurement.
    return errors / bits


if __name__ == '__main__':
    main(sys.argv[1])
