#!/usr/bin/env python3
"""Decode assets/coastlines-50m.bin and render it to a PNG for a visual check.

Python 3.11 standard library only (PNG written by hand with zlib).
Equirectangular projection; each polyline drawn as a line strip. A false
horizontal streak across the map would show any antimeridian-split bug.

    python3 scripts/assets/preview_coastlines.py [asset] --out preview.png [--width 1440] [--window LON0 LON1 LAT0 LAT1]

The binary format is documented at the top of make_coastlines.py.
"""

from __future__ import annotations

import argparse
import struct
import sys
import zlib
from pathlib import Path

MAGIC = b"PLCL"


def read_asset(data: bytes) -> list[list[tuple[float, float]]]:
    if data[:4] != MAGIC:
        raise ValueError("bad magic")
    (count,) = struct.unpack_from("<I", data, 4)
    off = 8
    polylines = []
    for _ in range(count):
        (n,) = struct.unpack_from("<I", data, off)
        off += 4
        raw = struct.unpack_from(f"<{2 * n}h", data, off)
        off += 4 * n
        polylines.append([(raw[2 * i] / 100.0, raw[2 * i + 1] / 100.0) for i in range(n)])
    if off != len(data):
        raise ValueError(f"{len(data) - off} trailing bytes")
    return polylines


def write_png(path: Path, w: int, h: int, rows: list[bytearray]) -> None:
    def chunk(tag: bytes, body: bytes) -> bytes:
        return struct.pack(">I", len(body)) + tag + body + struct.pack(">I", zlib.crc32(tag + body))

    raw = b"".join(b"\x00" + bytes(r) for r in rows)
    png = b"\x89PNG\r\n\x1a\n"
    png += chunk(b"IHDR", struct.pack(">IIBBBBB", w, h, 8, 2, 0, 0, 0))
    png += chunk(b"IDAT", zlib.compress(raw, 9))
    png += chunk(b"IEND", b"")
    path.write_bytes(png)


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser()
    ap.add_argument("asset", type=Path, nargs="?",
                    default=Path(__file__).resolve().parents[2] / "assets" / "coastlines-50m.bin")
    ap.add_argument("--out", type=Path, required=True, help="PNG file to write")
    ap.add_argument("--width", type=int, default=1440)
    ap.add_argument("--window", type=float, nargs=4, metavar=("LON0", "LON1", "LAT0", "LAT1"),
                    default=(-180.0, 180.0, -90.0, 90.0), help="area to draw (default: whole world)")
    args = ap.parse_args(argv)

    polylines = read_asset(args.asset.read_bytes())
    lon0, lon1, lat0, lat1 = args.window
    w = args.width
    h = max(1, round(w * (lat1 - lat0) / (lon1 - lon0)))
    bg, grid, ink = (12, 22, 40), (40, 55, 80), (120, 220, 160)
    rows = [bytearray(bg * w) for _ in range(h)]

    def put(x: int, y: int, c: tuple[int, int, int]) -> None:
        if 0 <= x < w and 0 <= y < h:  # off-window points are clipped
            rows[y][3 * x: 3 * x + 3] = bytes(c)

    def edge(v: int, size: int) -> int:
        return size - 1 if v == size else v  # the far border belongs to the last pixel

    for lon in range(-180, 181, 30):
        x = edge(int((lon - lon0) / (lon1 - lon0) * w), w)
        for y in range(h):
            put(x, y, grid)
    for lat in range(-90, 91, 30):
        y = edge(int((lat1 - lat) / (lat1 - lat0) * h), h)
        for x in range(w):
            put(x, y, grid)

    def px(p: tuple[float, float]) -> tuple[int, int]:
        return (edge(int((p[0] - lon0) / (lon1 - lon0) * w), w),
                edge(int((lat1 - p[1]) / (lat1 - lat0) * h), h))

    max_jump = 0.0
    for pl in polylines:
        for a, b in zip(pl, pl[1:]):
            max_jump = max(max_jump, abs(b[0] - a[0]))
            (x0, y0), (x1, y1) = px(a), px(b)
            dx, dy = abs(x1 - x0), -abs(y1 - y0)
            sx, sy = (1 if x0 < x1 else -1), (1 if y0 < y1 else -1)
            err = dx + dy
            while True:
                put(x0, y0, ink)
                if x0 == x1 and y0 == y1:
                    break
                e2 = 2 * err
                if e2 >= dy:
                    err += dy
                    x0 += sx
                if e2 <= dx:
                    err += dx
                    y0 += sy

    write_png(args.out, w, h, rows)
    print(f"polylines: {len(polylines)}, points: {sum(map(len, polylines))}, "
          f"max |dlon| between consecutive points: {max_jump:.2f} deg")
    print(f"written:   {args.out}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
