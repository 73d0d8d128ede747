#!/usr/bin/python3
"""Checks PeriodicRun (pitch/dsp/periodic_run.h) and its linear-chirp lag model with numpy and scipy.

Run by ctest as: /usr/bin/python3 check_periodic_run.py <path to periodic_run_dump>.

The helper prints a harmonic tone whose frequency rises linearly, f(t) = f0 (1 + g (t - t_mid)), at the fastest
sweep the tracker follows, the lag line it gives PeriodicRun (the period at the centre and the slope of the
periods one hop either side) and PeriodicRun's block aperiodicities with that slope and with none. Here,
independently:
1. Each block's aperiodicity, sum (x[n] - x(n + lag(n)))^2 / sum (x[n]^2 + x(n + lag(n))^2) (YIN's ratio of
   aperiodic to total power, de Cheveigne and Kawahara 2002, sec. II.F), with x between samples by linear
   interpolation (numpy.interp), must agree within 1e-6 relative (plus 1e-9).
2. The exact lag of the chirp at sample n, the tau with phase(n + tau) - phase(n) = 2 pi (scipy brentq on the
   closed-form phase), must lie off the line lag + slope (n + lag / 2 - mid) (the period at the pair's centre) by
   no more than the second-order term the line leaves out, lag (g u)^2 at the span's edge u (plus 20 %).
3. With the slope, every block's aperiodicity must be under a tenth of the largest without it: the model keeps a
   sweep periodic where a constant lag does not.
Exits 1 on any disagreement.
"""
import subprocess
import sys

import numpy as np
from scipy.optimize import brentq


def main():
    out = subprocess.run([sys.argv[1]], check=True, capture_output=True, text=True).stdout.split("\n")
    tone = x = line = None
    blocks = []
    for row in out:
        f = row.split()
        if not f:
            continue
        if f[0] == "tone":
            tone = (float(f[1]), float(f[2]), float(f[3]), int(f[4]))
        elif f[0] == "x":
            x = np.array([float(v) for v in f[1:]], dtype=np.float64)
        elif f[0] == "line":
            line = (float(f[1]), float(f[2]))
        elif f[0] == "block":
            blocks.append((float(f[1]), int(f[2]), int(f[3]), float(f[4])))
    rate, f0, g, n_len = tone
    lag, slope = line
    ok = True
    grid = np.arange(n_len, dtype=np.float64)
    mid = 0.5 * n_len
    last = 0
    for s, n0, n1, ap in blocks:
        n = np.arange(n0, n1, dtype=np.float64)
        v = np.interp(n + lag + s * (n + 0.5 * lag - mid), grid, x)
        u = x[n0:n1]
        ref = np.sum((u - v) ** 2) / np.sum(u * u + v * v)
        if abs(ap - ref) > 1e-6 * abs(ref) + 1e-9:
            print(f"block slope {s} [{n0}, {n1}): PeriodicRun {ap!r}, numpy {ref!r}")
            ok = False
        last = max(last, n1)
    t_mid = 0.5 * n_len / rate

    def phase(n):
        u = n / rate - t_mid
        return 2.0 * np.pi * f0 * (u + 0.5 * g * u * u)

    worst = 0.0
    for n in range(0, last):
        tau = brentq(lambda t: phase(n + t) - phase(n) - 2.0 * np.pi, 0.5 * lag, 1.5 * lag)
        worst = max(worst, abs(tau - (lag + slope * (n + 0.5 * lag - mid))))
    # The period rate / f(t) is 1 / (1 + g u) of its centre value: the line keeps the first order in g u, so what
    # is left is the second, lag (g u)^2 at the span's edge.
    limit = 1.2 * lag * (g * 0.5 * n_len / rate) ** 2 + 0.01
    if worst > limit:
        print(f"exact lag of the chirp off the line by {worst:.4f} samples (limit {limit:.4f})")
        ok = False
    with_slope = max(ap for s, _, _, ap in blocks if s != 0.0)
    without = max(ap for s, _, _, ap in blocks if s == 0.0)
    if not with_slope < 0.1 * without:
        print(f"aperiodicity with the slope {with_slope:.4g}, without {without:.4g}: the model does not help")
        ok = False
    print(f"{len(blocks)} blocks agree with numpy; lag line within {worst:.4f} samples of the exact chirp "
          f"(second-order term {limit:.4f}); "
          f"aperiodicity {with_slope:.2e} with the slope, {without:.2e} without")
    return 0 if ok else 1


if __name__ == "__main__":
    sys.exit(main())
