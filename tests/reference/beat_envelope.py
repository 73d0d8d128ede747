#!/usr/bin/python3
"""Outside reference for tests/test_two_voice.cpp: the beat rate of two
coinciding partials measured with scipy alone.

Reads a raw little-endian float32 file, band-passes it around FC Hz with a
4th-order Butterworth filter of half-width BW Hz run forwards and backwards
(scipy.signal.butter, sosfiltfilt), takes the amplitude envelope with the
analytic signal (scipy.signal.hilbert), drops the first and last 0.5 s, and
prints the frequency of the strongest component of the envelope between
0.3 and 40 Hz (zero-padded numpy FFT, parabolic interpolation).

usage: beat_envelope.py FILE RATE FC BW
"""
import sys

import numpy as np
from scipy.signal import butter, hilbert, sosfiltfilt


def main():
    path, rate, fc, bw = sys.argv[1], float(sys.argv[2]), float(sys.argv[3]), float(sys.argv[4])
    x = np.fromfile(path, dtype="<f4").astype(np.float64)
    sos = butter(4, [fc - bw, fc + bw], btype="bandpass", fs=rate, output="sos")
    env = np.abs(hilbert(sosfiltfilt(sos, x)))
    cut = int(0.5 * rate)
    env = env[cut:-cut]
    env = env - env.mean()
    env *= np.hanning(len(env))
    nfft = 1 << int(np.ceil(np.log2(len(env) * 16)))
    spec = np.abs(np.fft.rfft(env, nfft))
    f = np.fft.rfftfreq(nfft, 1.0 / rate)
    band = np.flatnonzero((f >= 0.3) & (f <= 40.0))
    k = band[np.argmax(spec[band])]
    a, b, c = spec[k - 1], spec[k], spec[k + 1]
    off = 0.5 * (a - c) / (a - 2 * b + c)
    print(f"{(k + off) * rate / nfft:.6f}")


if __name__ == "__main__":
    main()
