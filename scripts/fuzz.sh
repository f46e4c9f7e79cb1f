#!/usr/bin/env bash
# Fuzzes the readers of untrusted files (TLE, OMM KVN/XML/JSON, CDM, scenario, OEM).
#
# usage: bash scripts/fuzz.sh BUDGET_SECONDS [TARGET...]
#
# Runs each target (all of them by default) for BUDGET_SECONDS, one after the
# other, and exits non-zero if any target found a crash, a hang (> 10 s for one
# input) or an out-of-memory (> 2 GiB). Reproducers land in
# fuzz/artifacts/TARGET/; turn each into a regression test in the normal suite.
#
# Needs cargo-fuzz (installed from crates.io if missing). cargo-fuzz needs
# nightly compiler flags; with only a stable toolchain we set RUSTC_BOOTSTRAP=1,
# which unlocks them. The address sanitizer's runtime ships with stable's
# rust-std on x86_64 Linux; if the build with it fails we fall back to no
# sanitizer (safe Rust needs it little: panics, hangs and OOMs are still found).
# Never part of the normal build or tests: fuzz/ is its own workspace.
set -euo pipefail
cd "$(dirname "$0")/.."

budget="${1:-}"
if ! [[ "$budget" =~ ^[0-9]+$ ]] || [ "$budget" -eq 0 ]; then
    echo "usage: bash scripts/fuzz.sh BUDGET_SECONDS [TARGET...]" >&2
    exit 2
fi
shift
all_targets=(tle omm_kvn omm_xml omm_json cdm scenario oem)
if [ "$#" -gt 0 ]; then targets=("$@"); else targets=("${all_targets[@]}"); fi

if ! cargo fuzz --version >/dev/null 2>&1; then
    echo "fuzz.sh: installing cargo-fuzz" >&2
    cargo install cargo-fuzz --locked
fi
export RUSTC_BOOTSTRAP=1

# Seeds: copied from the test fixtures at run time (the corpus is not committed).
seed() {
    local target="$1"
    shift
    mkdir -p "fuzz/corpus/$target"
    local f
    for f in "$@"; do
        [ -f "$f" ] && cp "$f" "fuzz/corpus/$target/seed-$(basename "$f")"
    done
    return 0
}
seed tle scenarios/*.tle tests/fixtures/*.tle tests/fixtures/sgp4-verification/*.TLE
seed omm_kvn fuzz/seeds/omm_kvn/*
seed omm_xml fuzz/seeds/omm_xml/*
seed omm_json fuzz/seeds/omm_json/*
seed cdm crates/passlane-plan/tests/fixtures/cdm/* fuzz/seeds/cdm/*
seed scenario scenarios/*.json
seed oem tests/fixtures/*.oem

sanitizer=address
if ! (cd fuzz && cargo fuzz build --sanitizer "$sanitizer" "${targets[0]}" >/dev/null 2>&1); then
    echo "fuzz.sh: the address-sanitizer build failed; fuzzing without a sanitizer" >&2
    sanitizer=none
fi

failed=()
for t in "${targets[@]}"; do
    echo "fuzz.sh: $t for ${budget}s (sanitizer: $sanitizer)" >&2
    mkdir -p "fuzz/artifacts/$t"
    # -max_len keeps inputs small enough to run fast (big inputs have their own
    # tests); TLE records are independent 3-line blocks, so 4 KB (~25 records)
    # exercises the reader as well as more and runs several times faster.
    # -timeout flags a hang, -rss_limit_mb an OOM, -malloc_limit_mb a single
    # huge allocation.
    max_len=16384
    [ "$t" = tle ] && max_len=4096
    if ! (cd fuzz && cargo fuzz run --sanitizer "$sanitizer" "$t" "corpus/$t" -- \
        -max_total_time="$budget" -max_len="$max_len" -timeout=10 \
        -rss_limit_mb=2048 -malloc_limit_mb=1024 -print_final_stats=1); then
        failed+=("$t")
    fi
done

if [ "${#failed[@]}" -gt 0 ]; then
    echo "fuzz.sh: findings in: ${failed[*]} (see fuzz/artifacts/)" >&2
    exit 1
fi
echo "fuzz.sh: no findings in ${targets[*]}" >&2
