#!/usr/bin/env bash
# Whole-command screening benchmark: times `passlane screen ...` (load the
# element files, screen, assess every event's Pc, write the JSON) on the
# realistic synthetic catalog, with wall time, CPU time (user + system) and
# peak memory from GNU time (`/usr/bin/time -v`).
#
# The catalog (30,000 invented objects shaped like today's sky, and even picks
# of 10,000 and 5,000), ten sun-synchronous spacecraft and a fleet of 100 are
# written as TLE by the screening benchmark's generator
# (crates/passlane-plan/benches/support/catalog.rs states the make-up).
#
# Run from the repository root after `cargo build --release`:
#     bash scripts/bench/screen_cli.sh [CASE...]
# CASE: demo sso fleet all-5k all-10k all-30k (default: all of them).
# Environment: PASSLANE_BIN (default target/release/passlane under
# CARGO_TARGET_DIR or ./target), DATA_DIR (where the TLE files are made and
# kept; default a folder in the system's temporary directory), TIMEOUT_S (per
# case, default 600; a case stopped by it says so), THREADS (default 2).
set -euo pipefail
REPO="$(cd "$(dirname "$0")/../.." && pwd)"
TARGET="${CARGO_TARGET_DIR:-$REPO/target}"
BIN="${PASSLANE_BIN:-$TARGET/release/passlane}"
DATA="${DATA_DIR:-${TMPDIR:-/tmp}/passlane-screen-bench}"
TIMEOUT_S="${TIMEOUT_S:-600}"
export RAYON_NUM_THREADS="${THREADS:-2}"
[ -x "$BIN" ] || { echo "no binary at $BIN: run cargo build --release first" >&2; exit 1; }
if [ ! -f "$DATA/catalog-30000.tle" ]; then
    (cd "$REPO" && cargo bench -p passlane-plan --bench screening -- write-tle "$DATA")
fi
START=2026-12-01T00:00:00Z
WEEK=2026-12-08T00:00:00Z
DAY=2026-12-02T00:00:00Z
OUT="$(mktemp -d)"
trap 'rm -rf "$OUT"' EXIT

run() {
    local label="$1"; shift
    local rc=0
    timeout "$TIMEOUT_S" /usr/bin/time -v -o "$OUT/time" "$BIN" screen "$@" \
        --format json --quiet >"$OUT/events.json" 2>"$OUT/stderr" || rc=$?
    if [ "$rc" = 124 ]; then
        printf '%-44s stopped after %s s\n' "$label" "$TIMEOUT_S"
        return
    fi
    if [ "$rc" != 0 ]; then
        printf '%-44s failed (exit %s)\n' "$label" "$rc"; cat "$OUT/stderr" >&2; return
    fi
    local wall user sys rss events
    wall=$(sed -n 's/.*Elapsed (wall clock) time.*: //p' "$OUT/time")
    user=$(sed -n 's/.*User time (seconds): //p' "$OUT/time")
    sys=$(sed -n 's/.*System time (seconds): //p' "$OUT/time")
    rss=$(sed -n 's/.*Maximum resident set size (kbytes): //p' "$OUT/time")
    events=$(grep -c '"tca":' "$OUT/events.json" || true)
    printf '%-44s wall %8s  CPU %7.2f s  peak %6.0f MB  %7s events\n' \
        "$label" "$wall" "$(echo "$user + $sys" | bc)" "$(echo "$rss / 1024" | bc)" "$events"
}

cases=("$@")
[ ${#cases[@]} -gt 0 ] || cases=(demo sso fleet all-5k all-10k all-30k)
echo "passlane screen, whole command, $RAYON_NUM_THREADS threads, $(nproc) cores, sphere 5 km"
for c in "${cases[@]}"; do
    case "$c" in
    demo) run "demo fleet (6) vs 30,000, 7 d" --elements "$REPO/scenarios/demo-fleet.tle" \
        --catalog "$DATA/catalog-30000.tle" --start $START --end $WEEK --threshold-km 5 ;;
    sso) run "10 SSO vs 30,000, 7 d" --elements "$DATA/sso-10.tle" \
        --catalog "$DATA/catalog-30000.tle" --start $START --end $WEEK --threshold-km 5 ;;
    fleet) run "fleet 100 vs 30,000, 7 d" --elements "$DATA/fleet-100.tle" \
        --catalog "$DATA/catalog-30000.tle" --start $START --end $WEEK --threshold-km 5 ;;
    all-5k | all-10k | all-30k)
        n=$( [ "$c" = all-5k ] && echo 5000 || { [ "$c" = all-10k ] && echo 10000 || echo 30000; })
        run "all-vs-all $n, 24 h" --elements "$DATA/catalog-$n.tle" --all-vs-all \
            --start $START --end $DAY --threshold-km 5 ;;
    *) echo "unknown case $c" >&2; exit 2 ;;
    esac
done
