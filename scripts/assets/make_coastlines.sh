#!/usr/bin/env bash
# Regenerate assets/coastlines-50m.bin from Natural Earth 1:50m land polygons,
# as shipped (TopoJSON) in the npm package world-atlas 2.0.2.
#
# Needs: npm (only for `npm pack`, nothing is installed), tar, python3 >= 3.11.
# The result is committed; CI never runs this script.
#
# Usage: scripts/assets/make_coastlines.sh [extra args for make_coastlines.py]
set -euo pipefail

PKG="world-atlas@2.0.2"
TARBALL="world-atlas-2.0.2.tgz"
# SHA-1 of the tarball as published on the npm registry (dist.shasum).
TARBALL_SHA1="4bca4a578f3a413bd409c3f07f2054fe7375824f"
# SHA-256 of package/land-50m.json inside it.
LAND_SHA256="619477ff690c086885e45cb91707d783805561bd75ae8e437b7d4694b0204e0f"

here="$(cd "$(dirname "${BASH_SOURCE[0]}")" && pwd)"
repo="$(cd "$here/../.." && pwd)"

tmp="$(mktemp -d)"
trap 'rm -rf "$tmp"' EXIT

(cd "$tmp" && npm pack --silent "$PKG" >/dev/null)

echo "$TARBALL_SHA1  $tmp/$TARBALL" | sha1sum -c --quiet -
tar -xzf "$tmp/$TARBALL" -C "$tmp" package/land-50m.json package/LICENSE
echo "$LAND_SHA256  $tmp/package/land-50m.json" | sha256sum -c --quiet -

python3 "$here/make_coastlines.py" "$tmp/package/land-50m.json" \
    --out "$repo/assets/coastlines-50m.bin" "$@"
