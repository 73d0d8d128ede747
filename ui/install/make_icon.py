#!/usr/bin/python3
"""Draws the Beatless icon as SVG and as a 256-pixel PNG from one geometry.

The picture: beats that slow and fade into a still line, ending in a green
dot, on a dark rounded square (our own design). Both files are checked in;
run this script again after changing the geometry:
    /usr/bin/python3 ui/install/make_icon.py ui/install
PNG is written with the standard library (zlib, PNG specification ISO/IEC
15948); the pixels are 4x4 supersampled with numpy.
"""
import math
import os
import struct
import sys
import zlib

import numpy as np

SIZE = 64.0                      # the SVG's view box
BG = (0x17, 0x21, 0x2B)          # the square
LANE = (0x3B, 0x4B, 0x5C)        # the still line
BEAT = (0xF0, 0xB2, 0x3E)        # the beat envelope
DOT = (0x5C, 0xC9, 0x8A)         # in tune
X0, X1, CY, AMP = 10.0, 46.0, 32.0, 14.0
DOT_X, DOT_R = 50.0, 4.0


def envelope(x):
    """Half-height of the beat envelope at x: lobes that widen and fade."""
    u = min(max((x - X0) / (X1 - X0), 0.0), 1.0)
    return AMP * (1.0 - u) * abs(math.cos(math.pi * 4.0 * u * (1.0 - 0.5 * u)))


def svg():
    xs = [X0 + i * 0.25 for i in range(int((X1 - X0) / 0.25) + 1)]
    top = [f"{x:.2f},{CY - envelope(x):.2f}" for x in xs]
    bottom = [f"{x:.2f},{CY + envelope(x):.2f}" for x in reversed(xs)]
    hexc = lambda c: "#%02x%02x%02x" % c
    return (
        '<svg xmlns="http://www.w3.org/2000/svg" width="64" height="64" viewBox="0 0 64 64">\n'
        f'  <rect x="2" y="2" width="60" height="60" rx="12" fill="{hexc(BG)}"/>\n'
        f'  <rect x="{X0}" y="{CY - 0.75}" width="{DOT_X - X0}" height="1.5" fill="{hexc(LANE)}"/>\n'
        f'  <polygon fill="{hexc(BEAT)}" points="{" ".join(top + bottom)}"/>\n'
        f'  <circle cx="{DOT_X}" cy="{CY}" r="{DOT_R}" fill="{hexc(DOT)}"/>\n'
        "</svg>\n"
    )


def png(px):
    ss = 4
    n = px * ss
    c = (np.arange(n) + 0.5) * (SIZE / n)
    x, y = np.meshgrid(c, c)
    rgba = np.zeros((n, n, 4))
    # Rounded square: inside when the distance to the inner rectangle is at most the radius.
    dx = np.maximum(np.abs(x - 32.0) - (30.0 - 12.0), 0.0)
    dy = np.maximum(np.abs(y - 32.0) - (30.0 - 12.0), 0.0)
    square = dx * dx + dy * dy <= 12.0 * 12.0
    rgba[square] = (*BG, 255)
    lane = (x >= X0) & (x <= DOT_X) & (np.abs(y - CY) <= 0.75)
    rgba[lane] = (*LANE, 255)
    env = np.vectorize(envelope)(c)[None, :]
    beat = (x >= X0) & (x <= X1) & (np.abs(y - CY) <= env)
    rgba[beat] = (*BEAT, 255)
    dot = (x - DOT_X) ** 2 + (y - CY) ** 2 <= DOT_R * DOT_R
    rgba[dot] = (*DOT, 255)
    # Average each ss x ss block (premultiplied, then back).
    pre = rgba.copy()
    pre[..., :3] *= pre[..., 3:4] / 255.0
    blocks = pre.reshape(px, ss, px, ss, 4).mean(axis=(1, 3))
    a = blocks[..., 3:4]
    out = np.where(a > 0, blocks[..., :3] * 255.0 / np.maximum(a, 1e-9), 0.0)
    img = np.concatenate([out, a], axis=2).round().clip(0, 255).astype(np.uint8)
    raw = b"".join(b"\x00" + img[r].tobytes() for r in range(px))

    def chunk(kind, data):
        return struct.pack(">I", len(data)) + kind + data + struct.pack(">I", zlib.crc32(kind + data) & 0xFFFFFFFF)

    return (b"\x89PNG\r\n\x1a\n" + chunk(b"IHDR", struct.pack(">IIBBBBB", px, px, 8, 6, 0, 0, 0)) +
            chunk(b"IDAT", zlib.compress(raw, 9)) + chunk(b"IEND", b""))


def main():
    out = sys.argv[1] if len(sys.argv) > 1 else os.path.dirname(os.path.abspath(__file__))
    with open(os.path.join(out, "beatless.svg"), "w") as f:
        f.write(svg())
    with open(os.path.join(out, "beatless.png"), "wb") as f:
        f.write(png(256))


if __name__ == "__main__":
    main()
