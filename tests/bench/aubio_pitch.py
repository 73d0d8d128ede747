#!/usr/bin/python3
"""Runs aubio's pitch trackers over signals written by beatless-bench's "tracker" section.

Usage: /usr/bin/python3 aubio_pitch.py SIGNALS.f32 INDEX.txt OUT_PREFIX HOP BUF RATE

SIGNALS.f32 holds the signals one after another as raw float32; INDEX.txt one
"offset length" line per signal (in samples). For each method ("yin", "yinfft",
aubio's own defaults for tolerance and silence) and each signal a fresh
aubio.pitch(method, BUF, HOP, RATE) in Hz is fed HOP samples at a time; frame i
(after samples [i*HOP, (i+1)*HOP)) is written as two float32 values, pitch in Hz
(0 where aubio reports none) and aubio's confidence, to OUT_PREFIX.<method>.f32.
"""
import sys

import aubio
import numpy as np


def main():
    sig_path, index_path, prefix = sys.argv[1], sys.argv[2], sys.argv[3]
    hop, buf, rate = int(sys.argv[4]), int(sys.argv[5]), int(sys.argv[6])
    x = np.fromfile(sig_path, dtype=np.float32)
    index = [tuple(int(v) for v in line.split()) for line in open(index_path) if line.strip()]
    for method in ("yin", "yinfft"):
        out = []
        for off, length in index:
            p = aubio.pitch(method, buf, hop, rate)
            p.set_unit("Hz")
            seg = x[off:off + length]
            for i in range(length // hop):
                block = np.ascontiguousarray(seg[i * hop:(i + 1) * hop], dtype=np.float32)
                f = p(block)[0]
                out.append((f, p.get_confidence()))
        np.asarray(out, dtype=np.float32).tofile(f"{prefix}.{method}.f32")
    return 0


if __name__ == "__main__":
    sys.exit(main())
