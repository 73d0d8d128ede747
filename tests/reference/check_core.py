#!/usr/bin/python3
"""Outside reference for the first commands, using numpy and scipy.

Checks `beatless ratio ... --format json` against numpy's log2, an
independent trial-division factorisation and the beat-rate formula
|q*f_high - p*f_low| (Helmholtz, On the Sensations of Tone, ch. VIII) for the
audible pair it names: the interval's own pair p:q when a round drone (12
partials) sounds p below 4 kHz and q is at most the 16th, else a pair within
those limits (the rule in pitch/theory/beats.h); and `beatless tone` output against a scipy
periodogram: the voice's partial must sit where the ratio and detune put it.
Exit status 0 when everything agrees; prints what disagrees otherwise.
"""
import json
import subprocess
import sys
import tempfile

import numpy as np
from scipy.io import wavfile
from scipy.signal import periodogram

prog = sys.argv[1]
failures = []


def check(cond, what):
    if not cond:
        failures.append(what)


def largest_prime(n):
    best, p = 1, 2
    while p * p <= n:
        while n % p == 0:
            best, n = p, n // p
        p += 1
    return max(best, n) if n > 1 else best


def odd_part(n):
    while n % 2 == 0:
        n //= 2
    return n


ratios = ["7/5", "10/7", "11/8", "16/11", "15/11", "45/32", "64/45", "729/512", "1024/729", "81/80", "50/49", "3/2*5/4"]
out = subprocess.run([prog, "ratio", *ratios, "--root", "D3", "--format", "json"], capture_output=True, text=True, check=True)
doc = json.loads(out.stdout)
root = 440.0 * 2 ** ((50 - 69) / 12)  # D3 = MIDI 50
check(abs(doc["root_hz"] - root) < 5e-4, f"root_hz {doc['root_hz']} != {root}")
for given, iv in zip(ratios, doc["intervals"]):
    p, q = (int(v) for v in iv["ratio"].split("/"))
    exact = np.prod([int(a) / int(b) for a, b in (f.split("/") for f in given.split("*"))])
    check(abs(p / q - exact) < 1e-12, f"{given}: reduced to {p}/{q}")
    cents = 1200 * np.log2(p / q)
    check(abs(iv["cents"] - cents) < 6e-4, f"{given}: cents {iv['cents']} vs numpy {cents:.4f}")
    check(iv["prime_limit"] == max(largest_prime(p), largest_prime(q)), f"{given}: prime limit")
    check(iv["odd_limit"] == max(odd_part(p), odd_part(q)), f"{given}: odd limit")
    check(abs(iv["tenney_height"] - np.log2(p * q)) < 6e-4, f"{given}: Tenney height")
    check(abs(iv["et_offset_cents"] - (cents - 100 * round(cents / 100))) < 6e-4, f"{given}: ET offset")
    upper = root * p / q
    check(abs(iv["upper_hz"] - upper) < 6e-4, f"{given}: upper_hz")
    heard = iv["audible_partials"]
    check(heard is not None, f"{given}: no audible pair over a round drone")
    a, b_ = heard["root"], heard["upper"]
    check(a <= 12 and b_ <= 16 and a * root <= 4000.0, f"{given}: pair {a}:{b_} beyond the limits")
    if p <= 12 and q <= 16 and p * root <= 4000.0:
        check((a, b_) == (p, q), f"{given}: pair {a}:{b_}, own {p}:{q} is audible")
    for b in iv["beats"]:
        f_high = upper * 2 ** (b["dev_cents"] / 1200)
        want = abs(b_ * f_high - a * root)
        check(abs(b["beat_hz"] - want) < 6e-4 + 1e-6 * want, f"{given}: beat at {b['dev_cents']} c: {b['beat_hz']} vs {want}")

# tone: a 7/5 voice 6 cents sharp over A2 (110 Hz); the voice's fundamental
# should appear at 110 * 7/5 * 2^(6/1200) = 154.535 Hz, the drone's at 110 Hz.
with tempfile.TemporaryDirectory() as d:
    path = d + "/t.wav"
    subprocess.run([prog, "tone", "--root", "A2", "--ratio", "7/5", "--detune-cents", "6", "--timbre", "pure",
                    "--seconds", "8", "--rate", "48000", "--out", path], capture_output=True, check=True)
    rate, x = wavfile.read(path)
    x = x.astype(np.float64)
    f, pxx = periodogram(x, fs=rate, window="hann", nfft=len(x) * 4)

    def peak_near(f0):
        band = (f > f0 - 2) & (f < f0 + 2)
        i = np.flatnonzero(band)[np.argmax(pxx[band])]
        a, b, c = np.log(pxx[i - 1:i + 2])
        return f[i] + 0.5 * (a - c) / (a - 2 * b + c) * (f[1] - f[0])

    want = 110 * 7 / 5 * 2 ** (6 / 1200)
    got = peak_near(want)
    check(abs(1200 * np.log2(got / want)) < 0.05, f"tone voice at {got:.4f} Hz, want {want:.4f}")
    check(abs(1200 * np.log2(peak_near(110) / 110)) < 0.05, "tone drone not at 110 Hz")
    check(rate == 48000, f"tone rate {rate}")

if failures:
    print("\n".join(failures))
    sys.exit(1)
print("all reference checks agree")
