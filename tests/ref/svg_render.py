#!/usr/bin/python3
"""The timeline picture renders: rsvg-convert (Debian's librsvg2-bin) turns
it into a PNG that is not blank and shows what the picture promises.

usage: svg_render.py KNOWABLE SCHEMA

Checks, on the PNG decoded here with zlib (reference: the PNG specification,
W3C/ISO 15948, sections 6 to 9: 8-bit RGB/RGBA, filter types 0-4, the
Paeth predictor):
  - rsvg-convert accepts the file (exit 0) at the picture's own size;
  - at least 3% of the pixels are not white, and the white background
    covers at least half of it (printable: dark on white);
  - the verdict colours of the demo (Okabe-Ito bluish green #009E73,
    vermillion #D55E00 and the event blue #0072B2) each cover some pixels:
    the bars were drawn, not only the text;
  - a dark vertical line (the moment) runs through most of the height.
Exits 77 (skipped) when rsvg-convert is not installed.
"""
import os
import shutil
import struct
import subprocess
import sys
import tempfile
import zlib


def read_png(path):
    with open(path, "rb") as f:
        data = f.read()
    if data[:8] != b"\x89PNG\r\n\x1a\n":
        raise ValueError("not a PNG")
    pos, idat, width = 8, b"", None
    while pos < len(data):
        (n,) = struct.unpack(">I", data[pos:pos + 4])
        kind = data[pos + 4:pos + 8]
        body = data[pos + 8:pos + 8 + n]
        pos += 12 + n
        if kind == b"IHDR":
            width, height, depth, ctype, _, _, interlace = struct.unpack(">IIBBBBB", body)
            if depth != 8 or ctype not in (2, 6) or interlace != 0:
                raise ValueError("unsupported PNG layout %d/%d/%d" % (depth, ctype, interlace))
            bpp = 3 if ctype == 2 else 4
        elif kind == b"IDAT":
            idat += body
        elif kind == b"IEND":
            break
    raw = zlib.decompress(idat)
    stride = width * bpp
    rows, prev, i = [], bytearray(stride), 0
    for _ in range(height):
        ftype = raw[i]
        line = bytearray(raw[i + 1:i + 1 + stride])
        i += 1 + stride
        for x in range(stride):
            a = line[x - bpp] if x >= bpp else 0
            b = prev[x]
            c = prev[x - bpp] if x >= bpp else 0
            if ftype == 1:
                line[x] = (line[x] + a) & 255
            elif ftype == 2:
                line[x] = (line[x] + b) & 255
            elif ftype == 3:
                line[x] = (line[x] + ((a + b) >> 1)) & 255
            elif ftype == 4:
                p = a + b - c
                pa, pb, pc = abs(p - a), abs(p - b), abs(p - c)
                pred = a if pa <= pb and pa <= pc else (b if pb <= pc else c)
                line[x] = (line[x] + pred) & 255
        rows.append(line)
        prev = line
    pixels = []
    for line in rows:
        row = []
        for x in range(width):
            r, g, b = line[x * bpp:x * bpp + 3]
            alpha = line[x * bpp + 3] if bpp == 4 else 255
            # Composite on white, as a printer or a viewer would show it.
            row.append(tuple((v * alpha + 255 * (255 - alpha)) // 255 for v in (r, g, b)))
        pixels.append(row)
    return width, height, pixels


def near(p, rgb, tol=24):
    return all(abs(a - b) <= tol for a, b in zip(p, rgb))


def main():
    rsvg = shutil.which("rsvg-convert")
    if not rsvg:
        print("rsvg-convert missing: skipped")
        return 77
    exe, schema = sys.argv[1], sys.argv[2]
    failures = []
    with tempfile.TemporaryDirectory() as tmp:
        svg, png = os.path.join(tmp, "t.svg"), os.path.join(tmp, "t.png")
        r = subprocess.run([exe, "timeline", schema, "--svg", svg], capture_output=True)
        if r.returncode != 0:
            print("knowable failed:", r.stderr.decode(errors="replace"))
            return 1
        r = subprocess.run([rsvg, "-o", png, svg], capture_output=True)
        if r.returncode != 0:
            print("rsvg-convert failed:", r.stderr.decode(errors="replace"))
            return 1
        w, h, px = read_png(png)
    total = w * h
    white = sum(1 for row in px for p in row if p == (255, 255, 255))
    ink = total - white
    print("size %dx%d, %.1f%% not white" % (w, h, 100.0 * ink / total))
    if ink < 0.03 * total:
        failures.append("the picture is nearly blank")
    if white < 0.5 * total:
        failures.append("the background is not mostly white")
    for name, rgb in (("bluish green", (0x00, 0x9E, 0x73)), ("vermillion", (0xD5, 0x5E, 0x00)),
                      ("blue", (0x00, 0x72, 0xB2))):
        n = sum(1 for row in px for p in row if near(p, rgb))
        print("%s: %d pixels" % (name, n))
        if n < 200:
            failures.append("hardly any %s pixels: bars missing?" % name)
    best = max(sum(1 for y in range(h) if sum(px[y][x]) < 150) for x in range(w))
    print("darkest column: %d of %d rows dark" % (best, h))
    if best < 0.6 * h:
        failures.append("no vertical moment line")
    for f in failures:
        print("FAIL:", f)
    return 1 if failures else 0


if __name__ == "__main__":
    sys.exit(main())
