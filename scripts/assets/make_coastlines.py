#!/usr/bin/env python3
"""Build Passlane's world-map coastline asset from Natural Earth land polygons.

Input : `land-50m.json` (TopoJSON) from the npm package world-atlas 2.0.2,
        which repackages Natural Earth 1:50m "land" (public domain).
Output: `assets/coastlines-50m.bin` (default; see --out).

Python 3.11 standard library only. Usually run through make_coastlines.sh,
which fetches the npm package into a temporary folder first.

Pipeline
--------
1. Decode the TopoJSON: arcs are quantized and delta-encoded; absolute
   positions are rebuilt by running sums, then mapped to degrees with the
   top-level `transform` (lon = x * scale[0] + translate[0], same for lat).
   Polygon rings reference arcs by index; a negative index ~i means arc i
   reversed. Consecutive arcs share an endpoint, which is kept once.
2. Every ring of every polygon of the `land` object becomes a polyline.
3. Edges that are not real coastline are cut out: segments lying on the
   antimeridian (both ends at lon = +/-180) and segments along the bottom
   edge of the data (both ends at lat < -89.9, Antarctica's closure). A ring
   cut this way becomes one or more open polylines.
4. Douglas-Peucker simplification in plain lon/lat degrees with a tolerance
   of 0.05 deg (closed rings are split at their first point and the vertex
   farthest from it so both halves simplify like open lines).
5. Points are rounded to 0.01 deg and consecutive duplicates are removed.
6. Polylines are split wherever two consecutive points are more than 180 deg
   of longitude apart (an antimeridian crossing), so a renderer never draws
   a line across the map. The crossing latitude is interpolated and the two
   pieces end/start exactly on lon = +180 / -180.
7. Degenerate pieces are dropped: fewer than 2 points, closed rings with
   fewer than 3 distinct vertices, and pieces whose bounding box is smaller
   than 0.1 deg in both directions.

Binary format of coastlines-50m.bin (all integers little-endian)
-----------------------------------------------------------------
  offset 0 : 4 bytes   magic, ASCII "PLCL"
  offset 4 : u32       P = number of polylines
  then P times:
             u32       N = number of points in this polyline (N >= 2)
             N times:  i16 lon_centideg, i16 lat_centideg
                       (lon = lon_centideg / 100.0 in [-180, 180],
                        lat = lat_centideg / 100.0 in [-90, 90])
  The file ends right after the last polyline (no trailing bytes).
  A closed ring repeats its first point as its last point. Each polyline is
  drawn as a connected line strip; polylines are never joined to each other.
  No polyline has two consecutive points more than 180 deg of longitude apart.
"""

from __future__ import annotations

import argparse
import json
import math
import struct
import sys
from pathlib import Path

MAGIC = b"PLCL"
SCALE = 100  # stored units per degree (0.01 deg resolution)
DEFAULT_TOLERANCE = 0.05  # degrees
MIN_EXTENT = 0.1  # degrees; pieces smaller than this in both axes are dropped

Point = tuple[float, float]


# --------------------------------------------------------------------------
# TopoJSON decoding
# --------------------------------------------------------------------------

def decode_arcs(topo: dict) -> list[list[Point]]:
    transform = topo.get("transform")
    arcs: list[list[Point]] = []
    for arc in topo["arcs"]:
        pts: list[Point] = []
        if transform:
            sx, sy = transform["scale"]
            tx, ty = transform["translate"]
            x = y = 0
            for p in arc:
                x += p[0]
                y += p[1]
                pts.append((x * sx + tx, y * sy + ty))
        else:
            pts = [(float(p[0]), float(p[1])) for p in arc]
        arcs.append(pts)
    return arcs


def ring_points(arc_refs: list[int], arcs: list[list[Point]]) -> list[Point]:
    out: list[Point] = []
    for ref in arc_refs:
        arc = arcs[ref] if ref >= 0 else arcs[~ref][::-1]
        if out:
            out.extend(arc[1:])  # first point duplicates previous arc's last
        else:
            out.extend(arc)
    return out


def geometry_rings(geom: dict, arcs: list[list[Point]]) -> list[list[Point]]:
    kind = geom.get("type")
    if kind == "GeometryCollection":
        rings: list[list[Point]] = []
        for g in geom["geometries"]:
            rings.extend(geometry_rings(g, arcs))
        return rings
    if kind == "Polygon":
        return [ring_points(r, arcs) for r in geom["arcs"]]
    if kind == "MultiPolygon":
        return [ring_points(r, arcs) for poly in geom["arcs"] for r in poly]
    if kind in ("LineString",):
        return [ring_points(geom["arcs"], arcs)]
    if kind in ("MultiLineString",):
        return [ring_points(r, arcs) for r in geom["arcs"]]
    return []


# --------------------------------------------------------------------------
# Geometry helpers
# --------------------------------------------------------------------------

def is_artificial_edge(a: Point, b: Point) -> bool:
    """True for segments that only close polygons along the data's border."""
    on_am = abs(abs(a[0]) - 180.0) < 1e-4 and abs(abs(b[0]) - 180.0) < 1e-4
    on_pole = a[1] < -89.9 and b[1] < -89.9
    return on_am or on_pole


def cut_artificial(ring: list[Point]) -> tuple[list[list[Point]], bool]:
    """Remove artificial edges. Returns (pieces, still_closed)."""
    n = len(ring)
    if n < 2:
        return [], False
    bad = [is_artificial_edge(ring[i], ring[i + 1]) for i in range(n - 1)]
    if not any(bad):
        return [ring], ring[0] == ring[-1]
    pieces: list[list[Point]] = []
    cur: list[Point] = [ring[0]]
    for i in range(n - 1):
        if bad[i]:
            if len(cur) >= 2:
                pieces.append(cur)
            cur = [ring[i + 1]]
        else:
            cur.append(ring[i + 1])
    if len(cur) >= 2:
        pieces.append(cur)
    # A closed ring cut somewhere in the middle: glue the last piece onto the
    # first one if they meet at the ring's start point.
    if ring[0] == ring[-1] and not bad[0] and not bad[-1] and len(pieces) >= 2:
        first = pieces.pop(0)
        last = pieces.pop()
        pieces.append(last + first[1:])
    return pieces, False


def seg_dist(p: Point, a: Point, b: Point) -> float:
    ax, ay = a
    dx, dy = b[0] - ax, b[1] - ay
    px, py = p[0] - ax, p[1] - ay
    l2 = dx * dx + dy * dy
    if l2 == 0.0:
        return math.hypot(px, py)
    t = max(0.0, min(1.0, (px * dx + py * dy) / l2))
    return math.hypot(px - t * dx, py - t * dy)


def douglas_peucker(pts: list[Point], tol: float) -> list[Point]:
    n = len(pts)
    if n <= 2:
        return list(pts)
    keep = [False] * n
    keep[0] = keep[-1] = True
    stack = [(0, n - 1)]
    while stack:
        i, j = stack.pop()
        if j <= i + 1:
            continue
        a, b = pts[i], pts[j]
        best, best_k = -1.0, -1
        for k in range(i + 1, j):
            d = seg_dist(pts[k], a, b)
            if d > best:
                best, best_k = d, k
        if best > tol:
            keep[best_k] = True
            stack.append((i, best_k))
            stack.append((best_k, j))
    return [p for p, k in zip(pts, keep) if k]


def simplify_ring(ring: list[Point], tol: float) -> list[Point]:
    """DP on a closed ring (first == last)."""
    if len(ring) <= 4:
        return list(ring)
    start = ring[0]
    far = max(range(len(ring)), key=lambda k: math.hypot(ring[k][0] - start[0], ring[k][1] - start[1]))
    if far == 0 or far == len(ring) - 1:
        return douglas_peucker(ring, tol)
    a = douglas_peucker(ring[: far + 1], tol)
    b = douglas_peucker(ring[far:], tol)
    return a + b[1:]


def quantize(pts: list[Point]) -> list[tuple[int, int]]:
    out: list[tuple[int, int]] = []
    for lon, lat in pts:
        q = (
            max(-180 * SCALE, min(180 * SCALE, round(lon * SCALE))),
            max(-90 * SCALE, min(90 * SCALE, round(lat * SCALE))),
        )
        if not out or out[-1] != q:
            out.append(q)
    return out


def split_antimeridian(pts: list[tuple[int, int]]) -> list[list[tuple[int, int]]]:
    """Split where consecutive points are > 180 deg of longitude apart.

    Such a step is a crossing of the antimeridian: the latitude of the
    crossing is interpolated, the piece before it ends on the map edge it
    leaves through, and the next piece starts on the opposite edge.
    """
    if not pts:
        return []
    half, full = 180 * SCALE, 360 * SCALE
    pieces: list[list[tuple[int, int]]] = []
    cur = [pts[0]]
    for p in pts[1:]:
        x0, y0 = cur[-1]
        x1, y1 = p
        if abs(x1 - x0) > half:
            if x1 > x0:  # leaving westward through -180, re-entering at +180
                edge, x1u = -half, x1 - full
            else:  # leaving eastward through +180, re-entering at -180
                edge, x1u = half, x1 + full
            t = (edge - x0) / (x1u - x0) if x1u != x0 else 0.0
            lat = round(y0 + t * (y1 - y0))
            if cur[-1] != (edge, lat):
                cur.append((edge, lat))
            pieces.append(cur)
            cur = [(-edge, lat)]
            if p != cur[0]:
                cur.append(p)
        else:
            cur.append(p)
    pieces.append(cur)
    # A closed ring that crosses the antimeridian: its start point lies in
    # the middle of one continuous stretch, so join the last and first piece.
    if len(pieces) >= 2 and pts[0] == pts[-1]:
        first = pieces.pop(0)
        last = pieces.pop()
        pieces.append(last + first[1:])
    return pieces


def keep_piece(pts: list[tuple[int, int]]) -> bool:
    if len(pts) < 2:
        return False
    closed = pts[0] == pts[-1]
    if closed and len(set(pts)) < 3:
        return False
    xs = [p[0] for p in pts]
    ys = [p[1] for p in pts]
    lim = MIN_EXTENT * SCALE
    return (max(xs) - min(xs)) >= lim or (max(ys) - min(ys)) >= lim


# --------------------------------------------------------------------------
# Main
# --------------------------------------------------------------------------

def build(topo: dict, object_name: str, tol: float) -> list[list[tuple[int, int]]]:
    arcs = decode_arcs(topo)
    obj = topo["objects"][object_name]
    rings = geometry_rings(obj, arcs)
    out: list[list[tuple[int, int]]] = []
    for ring in rings:
        pieces, closed = cut_artificial(ring)
        for piece in pieces:
            simp = simplify_ring(piece, tol) if closed else douglas_peucker(piece, tol)
            q = quantize(simp)
            for part in split_antimeridian(q):
                if keep_piece(part):
                    out.append(part)
    return out


def encode(polylines: list[list[tuple[int, int]]]) -> bytes:
    buf = bytearray(MAGIC)
    buf += struct.pack("<I", len(polylines))
    for pl in polylines:
        buf += struct.pack("<I", len(pl))
        for lon, lat in pl:
            buf += struct.pack("<hh", lon, lat)
    return bytes(buf)


def main(argv: list[str] | None = None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("input", type=Path, help="path to land-50m.json (TopoJSON)")
    ap.add_argument("--out", type=Path, default=Path(__file__).resolve().parents[2] / "assets" / "coastlines-50m.bin")
    ap.add_argument("--object", default="land", help="TopoJSON object name (default: land)")
    ap.add_argument("--tolerance", type=float, default=DEFAULT_TOLERANCE, help="simplification tolerance, degrees")
    args = ap.parse_args(argv)

    topo = json.loads(args.input.read_text(encoding="utf-8"))
    if topo.get("type") != "Topology":
        print("error: input is not a TopoJSON Topology", file=sys.stderr)
        return 1
    polylines = build(topo, args.object, args.tolerance)
    data = encode(polylines)
    args.out.parent.mkdir(parents=True, exist_ok=True)
    args.out.write_bytes(data)
    npts = sum(len(p) for p in polylines)
    closed = sum(1 for p in polylines if p[0] == p[-1])
    print(f"polylines: {len(polylines)} ({closed} closed rings, {len(polylines) - closed} open)")
    print(f"points:    {npts}")
    print(f"bytes:     {len(data)}")
    print(f"written:   {args.out.name}")
    return 0


if __name__ == "__main__":
    sys.exit(main())
