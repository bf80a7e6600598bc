#!/usr/bin/env python3
"""Measures how wide text renders in the plots' font, for GLYPH_EM in src/plot/svg.ts: each sample string is
drawn at 16 px, regular and bold, by rsvg-convert (librsvg2-bin) with the plots' font-family, and the width
of its ink is printed in em per character. Needs rsvg-convert and the DejaVu fonts; no Python packages.
Run: python3 scripts/measure-text-width.py ["more text" ...]"""
import os
import struct
import subprocess
import sys
import tempfile
import zlib

FONT_FAMILY = "DejaVu Sans, Arial, Helvetica, sans-serif"  # as in src/plot/spectrum-plot.ts
SIZE_PX = 16
SAMPLES = [
    "Kramers-Kronig check of data/marrowick/ito-sputtered.tsv: consistent (max |Δn| 3.5e-3 at 1525.0 nm)",
    "tauc-lorentz fit of data/marrowick/sinx-pecvd-recipe-a.csv",
    "sio2-thermal@1 vs sio2-thermal@2",
    "Wavelength (nm)",
    "0123456789.5e-3",
]


def png_pixels(path):
    """Rows of an 8-bit RGB or RGBA PNG as bytearrays, and the bytes per pixel (PNG spec, filters 0-4)."""
    data = open(path, "rb").read()
    pos, idat = 8, b""
    while pos < len(data):
        length, kind = struct.unpack(">I4s", data[pos:pos + 8])
        body = data[pos + 8:pos + 8 + length]
        pos += 12 + length
        if kind == b"IHDR":
            width, height, depth, colour = struct.unpack(">IIBB", body[:10])
            assert depth == 8 and colour in (2, 6), "8-bit RGB or RGBA expected"
        elif kind == b"IDAT":
            idat += body
    raw = zlib.decompress(idat)
    bpp = 3 if colour == 2 else 4
    stride = width * bpp
    rows, prev, i = [], bytearray(stride), 0
    for _ in range(height):
        kind, line = raw[i], bytearray(raw[i + 1:i + 1 + stride])
        i += 1 + stride
        for x in range(stride):
            a = line[x - bpp] if x >= bpp else 0
            b = prev[x]
            c = prev[x - bpp] if x >= bpp else 0
            if kind == 1:
                line[x] = (line[x] + a) & 255
            elif kind == 2:
                line[x] = (line[x] + b) & 255
            elif kind == 3:
                line[x] = (line[x] + (a + b) // 2) & 255
            elif kind == 4:
                p = a + b - c
                pa, pb, pc = abs(p - a), abs(p - b), abs(p - c)
                line[x] = (line[x] + (a if pa <= pb and pa <= pc else b if pb <= pc else c)) & 255
        rows.append(line)
        prev = line
    return width, rows, bpp


def ink_width(text, bold, workdir):
    escaped = text.replace("&", "&amp;").replace("<", "&lt;")
    weight = 'font-weight="bold"' if bold else ""
    svg = (f'<svg xmlns="http://www.w3.org/2000/svg" width="3000" height="60"><rect width="3000" height="60" fill="#fff"/>'
           f'<text x="10" y="40" font-family="{FONT_FAMILY}" font-size="{SIZE_PX}" {weight}>{escaped}</text></svg>')
    svg_path, png_path = os.path.join(workdir, "t.svg"), os.path.join(workdir, "t.png")
    open(svg_path, "w", encoding="utf-8").write(svg)
    subprocess.run(["rsvg-convert", "-o", png_path, svg_path], check=True)
    width, rows, bpp = png_pixels(png_path)
    xs = [x for row in rows for x in range(width) if row[bpp * x] < 128]
    return max(xs) - min(xs) + 1 if xs else 0


def main():
    with tempfile.TemporaryDirectory() as workdir:
        for text in sys.argv[1:] or SAMPLES:
            chars = len(text)
            regular = ink_width(text, False, workdir) / chars / SIZE_PX
            bold = ink_width(text, True, workdir) / chars / SIZE_PX
            print(f"regular {regular:.3f} em  bold {bold:.3f} em  per character: {text}")


if __name__ == "__main__":
    main()
