#!/usr/bin/python3
"""Checks DroneComb (pitch/dsp/drone_comb.h), the comb with feedback, against scipy.signal.freqz.

Run by ctest as: /usr/bin/python3 check_drone_comb.py <path to drone_comb_dump>.

The helper prints the filter's impulse response for a few rates, roots and feedbacks g. Here, independently:
1. The filter's difference equation y[n] = x[n] - x(n - D) + g y(n - D), D = rate / root, with
   x(n - D) and y(n - D) by third-order Lagrange interpolation (the taps from Laakso et al., "Splitting the unit
   delay", IEEE Signal Processing Magazine 13(1), 1996, eq. 42: h(k) = prod_{m != k} (d - m) / (k - m)), is
   written as polynomials b and a, and scipy.signal.freqz(b, a) must match the DTFT of the printed response within
   1e-4 (float output) from 20 Hz to rate / 2.
2. Below 4 kHz the response must lie within 0.01 of the ideal comb with feedback (1 - e^{-jwD}) / (1 - g e^{-jwD})
   (J. O. Smith, Physical Audio Signal Processing, "Feedback Comb Filters").
3. The claims the header makes: for g = 0 and 0.5 every partial of the root to 2 kHz is removed (below -60 dB);
   midway between partials the gain is 2 / (1 + g) (within 0.05 dB); a voice at 320 Hz over a 110 Hz drone
   changes its SNR against white noise by -2.35 dB at g = 0.5 (|H(320)|^2 over the mean power gain, sum h^2 by
   Parseval), +0.08 dB at g = 0.95, and -7.99 dB through the feedforward comb (g = 0: 2 |sin(pi f D / rate)| =
   0.566 against a mean power gain of 2); each within 0.3 dB (the interpolator's droop towards rate / 2 lowers the mean power gain a little:
   measured 0.1 to 0.2 dB better than the ideal comb's).
Exits 1 on any disagreement.
"""
import subprocess
import sys

import numpy as np
from scipy.signal import freqz


def lagrange_taps(d):
    return np.array([np.prod([(d - m) / (k - m) for m in range(4) if m != k]) for k in range(4)])


def main():
    rows = subprocess.run([sys.argv[1]], check=True, capture_output=True, text=True).stdout.split("\n")
    bad = 0
    case = None
    for row in rows:
        f = row.split()
        if not f:
            continue
        if f[0] == "comb":
            case = (float(f[1]), float(f[2]), float(f[3]), int(f[4]))
            continue
        rate, root, g, n = case
        h = np.array([float(v) for v in f[1:]], dtype=np.float64)
        assert len(h) == n
        D = rate / root
        W = int(np.floor(D))
        taps = lagrange_taps(D - (W - 1))  # on x[n - (W - 1) - k], k = 0..3: the delay D sits between taps 1 and 2
        s = 1.0
        b = np.zeros(W + 3)
        a = np.zeros(W + 3)
        b[0] = s
        a[0] = 1.0
        b[W - 1:W + 3] -= s * taps
        a[W - 1:W + 3] -= g * taps
        freqs = np.concatenate([np.linspace(20.0, rate / 2 - 1.0, 997), root * np.arange(1, 19) + 0.0,
                                root * (np.arange(1, 19) + 0.5), [320.0]])
        _, want = freqz(b, a, worN=freqs, fs=rate)
        w = 2 * np.pi * freqs / rate
        nz = np.nonzero(h)[0]  # the response is an impulse and echoes near multiples of D: sum only where it is not 0

        def dtft(fk):
            return np.sum(h[nz] * np.exp(-1j * 2 * np.pi * fk / rate * nz))

        got = np.array([dtft(fk) for fk in freqs])
        err = np.max(np.abs(got - want))
        name = f"rate {rate:g} root {root:g} g {g:g}"
        print(f"{name}: |DTFT - freqz| max {err:.2e}")
        if err > 1e-4:
            print(f"FAIL {name}: the response differs from freqz by {err:.2e}")
            bad += 1
        low = freqs < 4000.0
        ideal = s * (1 - np.exp(-1j * w * D)) / (1 - g * np.exp(-1j * w * D))
        e2 = np.max(np.abs(got[low] - ideal[low]))
        if e2 > 0.01:
            print(f"FAIL {name}: below 4 kHz {e2:.3g} from the ideal comb with feedback")
            bad += 1
        mag = np.abs(got)
        partials = root * np.arange(1, 19)
        for fp in (partials[partials <= 2000.0] if g <= 0.5 else []):
            m = 20 * np.log10(abs(dtft(fp)) + 1e-30)
            if m > -60.0:
                print(f"FAIL {name}: partial {fp:g} Hz left at {m:.1f} dB")
                bad += 1
        mids = root * (np.arange(1, 19) + 0.5)
        for fm in mids[mids <= 2000.0]:
            m = 20 * np.log10(abs(dtft(fm)))
            want_mid = 20 * np.log10(2.0 / (1.0 + g))
            if abs(m - want_mid) > 0.05:
                print(f"FAIL {name}: midway {fm:g} Hz at {m:.2f} dB, not {want_mid:.2f}")
                bad += 1
        g320 = abs(dtft(320.0))
        snr_db = 10 * np.log10(g320 ** 2 / np.sum(h ** 2))
        print(f"{name}: gain at 320 Hz {g320:.3f}, SNR change against white noise {snr_db:+.2f} dB")
        if root == 110.0:
            want_db = {0.0: -7.99, 0.5: -2.35, 0.95: 0.08}[g]
            if abs(snr_db - want_db) > 0.3:
                print(f"FAIL {name}: the SNR at 320 Hz changes {snr_db:+.2f} dB, not {want_db:+.2f}")
                bad += 1
    return 1 if bad else 0


if __name__ == "__main__":
    sys.exit(main())
