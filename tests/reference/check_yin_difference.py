#!/usr/bin/python3
"""Checks pitch::yin_difference and the Cramer-Rao bound of tests/signals.h with numpy.

Run by ctest as: /usr/bin/python3 check_yin_difference.py <path to yin_difference_dump>.

1. The YIN difference function (de Cheveigne and Kawahara, JASA 111(4) 2002,
   eq. 6), d(tau) = sum_{j<W} (x[j] - x[j+tau])^2, computed directly in float64
   from the very samples the helper printed, must match the C++ FFT path to
   within 2e-6 of 2 * sum x^2 (float FFT rounding; a wrong lag, window or
   scaling is off by far more).
2. The asymptotic bound var(w0) >= 24 s^2 / (N^3 sum l^2 A_l^2) (Christensen and
   Jakobsson, Multi-Pitch Estimation, 2009) must agree within 1% with the exact
   bound from numpy: the inverse of the full Fisher information matrix of the
   real harmonic model sum_l A_l cos(l w0 n + phi_l) (unknowns w0, every A_l and
   phi_l), with the time origin at the window's centre.
Exits 1 on any disagreement.
"""
import subprocess
import sys

import numpy as np


def main():
    out = subprocess.run([sys.argv[1]], check=True, capture_output=True, text=True).stdout.splitlines()
    failures = 0
    checked = 0
    i = 0
    while i < len(out):
        words = out[i].split()
        if words[0] == "case":
            window, max_lag = int(words[1]), int(words[2])
            x = np.array([float(v) for v in out[i + 1].split()[1:]], dtype=np.float64)
            d_cpp = np.array([float(v) for v in out[i + 2].split()[1:]], dtype=np.float64)
            d_np = np.array([np.sum((x[:window] - x[tau:tau + window]) ** 2) for tau in range(max_lag + 1)])
            scale = 2.0 * np.sum(x[:window + max_lag] ** 2)
            err = np.max(np.abs(d_cpp - d_np)) / scale
            ok = len(d_cpp) == max_lag + 1 and err < 2e-6
            print(f"difference window {window} max_lag {max_lag}: max |d_cpp - d_numpy| / (2 sum x^2) = {err:.2e} {'ok' if ok else 'FAIL'}")
            failures += 0 if ok else 1
            checked += 1
            i += 3
        elif words[0] == "crb":
            rate, f0, var, n, count = float(words[1]), float(words[2]), float(words[3]), int(words[4]), int(words[5])
            parts = [tuple(float(v) for v in out[i + 1 + k].split()[1:]) for k in range(count)]
            value = float(out[i + 1 + count].split()[1])
            w0 = 2 * np.pi * f0 / rate
            t = np.arange(n) - (n - 1) / 2.0
            cols = [np.zeros(n)]
            for (l, a, ph) in parts:
                arg = l * w0 * t + ph
                cols[0] += -a * l * t * np.sin(arg)       # d/d w0
                cols.append(np.cos(arg))                  # d/d A_l
                cols.append(-a * np.sin(arg))             # d/d phi_l
            J = np.stack(cols, axis=1)
            fim = J.T @ J / var
            var_w0 = np.linalg.inv(fim)[0, 0]
            exact = 1200 / np.log(2) * np.sqrt(var_w0) / w0
            rel = abs(value - exact) / exact
            cycles = n * f0 / rate
            ok = rel < (0.01 if cycles >= 10 else 0.15)
            print(f"CRB f0 {f0:g} Hz, {count} partials: formula {value:.6f} c, exact FIM {exact:.6f} c, rel diff {rel:.2e} ({cycles:.1f} periods) {'ok' if ok else 'FAIL'}")
            failures += 0 if ok else 1
            checked += 1
            i += 2 + count
        else:
            print(f"unexpected line from the helper: {out[i][:60]}")
            return 1
    if checked == 0:
        print("nothing checked")
        return 1
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
