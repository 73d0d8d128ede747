#!/usr/bin/python3
"""Outside reference for the best-fitting chord root (pitch/theory/chord.h, best_fit).

Reads cases from the file named by argv[1], one per line:
    t_1 ... t_n | f_1 ... f_n | w_1 ... w_n
(target cents above the root, measured Hz, weights) and prints one line per
case: the root R in Hz found two ways, independently of the C++ closed form:
  1. numpy.linalg.lstsq on the weighted linear model in the log domain:
     minimise sum_i w_i (1200 log2 f_i - t_i - x)^2 over x = 1200 log2 R,
     solved as a least-squares system sqrt(w) * [1] x = sqrt(w) * b;
  2. scipy.optimize.minimize_scalar on the same sum written directly in R
     (Hz), S(R) = sum_i w_i (1200 log2(f_i / R) - t_i)^2, bounded search,
     which checks that the log-domain formulation minimises the stated sum.
Uses Debian's numpy and scipy; always run with /usr/bin/python3.
"""
import sys

import numpy as np
from scipy.optimize import minimize_scalar


def solve(t, f, w):
    t, f, w = np.asarray(t), np.asarray(f), np.asarray(w)
    b = 1200.0 * np.log2(f) - t
    a = np.sqrt(w)[:, None] * np.ones((len(f), 1))
    x, *_ = np.linalg.lstsq(a, np.sqrt(w) * b, rcond=None)
    r_lstsq = 2.0 ** (x[0] / 1200.0)

    def s(r):
        return float(np.sum(w * (1200.0 * np.log2(f / r) - t) ** 2))

    lo, hi = r_lstsq / 2.0, r_lstsq * 2.0
    res = minimize_scalar(s, bounds=(lo, hi), method="bounded", options={"xatol": 1e-12 * r_lstsq})
    return r_lstsq, float(res.x)


def main():
    with open(sys.argv[1]) as fh:
        for line in fh:
            if not line.strip():
                continue
            parts = [[float(v) for v in p.split()] for p in line.split("|")]
            r1, r2 = solve(*parts)
            print(f"{r1:.15g} {r2:.15g}")


if __name__ == "__main__":
    main()
