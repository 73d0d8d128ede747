#!/usr/bin/python3
"""Outside reference for tests/test_root_detect.cpp.

Reads a raw little-endian float32 file, takes one Hann-windowed periodogram
of the whole signal with scipy.signal.periodogram, zero-padded so bins are
finer than 0.01 Hz, finds the strongest peak between LO and HI Hz with
scipy.signal.find_peaks, refines it by parabolic interpolation of the log
power, and prints its frequency in Hz. On a recording of many seconds the
steady drone's fundamental is a narrow line there; a voice with vibrato is
spread over many bins.

usage: root_periodogram.py FILE RATE LO HI
"""
import sys

import numpy as np
from scipy.signal import find_peaks, periodogram


def main():
    path, rate, lo, hi = sys.argv[1], float(sys.argv[2]), float(sys.argv[3]), float(sys.argv[4])
    x = np.fromfile(path, dtype="<f4").astype(np.float64)
    nfft = 1 << int(np.ceil(np.log2(max(len(x), rate / 0.005))))
    f, p = periodogram(x, fs=rate, window="hann", nfft=nfft, detrend=False, scaling="spectrum")
    band = (f >= lo) & (f <= hi)
    idx = np.flatnonzero(band)
    peaks, _ = find_peaks(p[idx])
    if len(peaks) == 0:
        print("nan")
        return
    k = idx[peaks[np.argmax(p[idx][peaks])]]
    a, b, c = np.log(p[k - 1]), np.log(p[k]), np.log(p[k + 1])
    off = 0.5 * (a - c) / (a - 2 * b + c)
    print(f"{(k + off) * rate / nfft:.6f}")


if __name__ == "__main__":
    main()
