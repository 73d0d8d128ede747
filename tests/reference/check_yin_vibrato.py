#!/usr/bin/python3
"""Checks the vibrato correction's model (pitch/dsp/yin.cpp, section 5) with numpy and scipy.

Run by ctest as: /usr/bin/python3 check_yin_vibrato.py <path to yin_vibrato_dump>.

For each case the helper prints a window W, a lag L = K T and the kernel second
moment m2 it uses. Here, independently:
1. m2 is recomputed numerically as the second moment of the biweight
   (1 - u^2)^2 over W samples convolved with a boxcar of L samples (numpy
   convolution); it must agree within 0.5 %.
2. An FM sine x(t) = cos(phi(t)) with f(t) = f0 (1 + a sin(2 pi v t + p)) and
   its exact phase phi(t) = 2 pi f0 (t - a cos(2 pi v t + p) / (2 pi v)) is
   evaluated at continuous times; the lag minimising
   D(tau) = sum_n w[n] (x(s + n) - x(s + n + tau))^2 (the YIN difference,
   de Cheveigne and Kawahara 2002, eq. 6, with the biweight) is found by
   scipy.optimize.minimize_scalar, giving f_est = K rate / tau. Its bias
   ln f_est - ln f(t_c) must match the model's m2 / 2 (ln f)''(t_c) within
   20 % of the largest bias of the case plus 0.05 cents, and removing the
   model's bias must leave under half the raw error (kernel-smoothing bias,
   Wand and Jones, Kernel Smoothing, 1995, sec. 2.5).
Exits 1 on any disagreement.
"""
import subprocess
import sys

import numpy as np
from scipy.optimize import minimize_scalar

CENTS = 1200.0 / np.log(2.0)


def main():
    out = subprocess.run([sys.argv[1]], check=True, capture_output=True, text=True).stdout.splitlines()
    failures = 0
    for line in out:
        w = line.split()
        rate, W, L, K, f0, a, v, p, tc, m2 = (float(w[1]), float(w[2]), float(w[3]), int(w[4]), float(w[5]),
                                             float(w[6]), float(w[7]), float(w[8]), float(w[9]), float(w[10]))
        # 1. The kernel's second moment, numerically.
        n_w = int(round(W))
        u = (np.arange(n_w) - (n_w - 1) / 2.0) / (W / 2.0)
        bw = np.clip(1.0 - u * u, 0.0, None) ** 2
        box = np.ones(int(round(L)))
        k = np.convolve(bw, box)
        k /= k.sum()
        pos = np.arange(k.size)
        mean = np.sum(pos * k)
        m2_np = np.sum((pos - mean) ** 2 * k)
        ok1 = abs(m2_np / m2 - 1.0) < 0.005
        # 2. The least-squares lag on an exactly known FM tone.
        omega = 2.0 * np.pi * v

        def f(t):
            return f0 * (1.0 + a * np.sin(omega * t + p))

        def phi(t):
            return 2.0 * np.pi * f0 * (t - a * np.cos(omega * t + p) / omega)

        def lnf_dd(t):   # (ln f)'' exactly
            g1 = a * omega * np.cos(omega * t + p) / (1.0 + a * np.sin(omega * t + p))
            g2 = -a * omega ** 2 * np.sin(omega * t + p) / (1.0 + a * np.sin(omega * t + p))
            return g2 - g1 * g1

        n = np.arange(n_w)

        def D(tau):
            s = tc * rate - (W - 1.0 + tau) / 2.0
            t1 = (s + n) / rate
            t2 = (s + n + tau) / rate
            return np.sum(bw * (np.cos(phi(t1)) - np.cos(phi(t2))) ** 2)

        T = rate / f(tc)
        res = minimize_scalar(D, bounds=(L * 0.97, L * 1.03), method="bounded", options={"xatol": 1e-7})
        # the bounded search might land on a neighbouring multiple: refine around K T
        taus = np.linspace(K * T - 0.4 * T, K * T + 0.4 * T, 801)
        t0 = taus[np.argmin([D(t) for t in taus])]
        res = minimize_scalar(D, bounds=(t0 - T / 400.0, t0 + T / 400.0), method="bounded", options={"xatol": 1e-9})
        f_est = K * rate / res.x
        raw = (np.log(f_est) - np.log(f(tc))) * CENTS
        model = 0.5 * (m2 / rate ** 2) * lnf_dd(tc) * CENTS
        peak = 0.5 * (m2 / rate ** 2) * a * omega ** 2 * CENTS
        left = raw - model
        ok2 = abs(left) <= 0.2 * peak + 0.05 and (abs(raw) < 0.1 or abs(left) < 0.5 * abs(raw))
        print(f"W {W:.0f} L {L:.1f} f0 {f0} a {a} v {v}: m2 {m2:.1f} numpy {m2_np:.1f} {'ok' if ok1 else 'FAIL'}; "
              f"bias {raw:+.3f} c, model {model:+.3f} c, left {left:+.3f} c (peak {peak:.2f}) {'ok' if ok2 else 'FAIL'}")
        failures += (0 if ok1 else 1) + (0 if ok2 else 1)
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
