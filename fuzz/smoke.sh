#!/usr/bin/env bash
# Short cargo-fuzz run of every fuzz target (CI: `./ci.sh fuzz`).
#
#   bash fuzz/smoke.sh [SECONDS [TARGET…]]   # SECONDS (≥ 1) per target, default 30; all targets
#
# Needs a nightly toolchain (FUZZ_TOOLCHAIN, default "nightly"); installs cargo-fuzz with
# `cargo install cargo-fuzz --locked` when it is missing (about 40 s on a 2-core machine).
# Each target starts from its committed corpus (fuzz/corpus/<target>/, minimised with
# `cargo fuzz cmin`); a target without one gets a few seed inputs first. New inputs the run
# finds are left uncommitted. Exits non-zero on any crash, panic, timeout or OOM; the
# reproducer is left in fuzz/artifacts/<target>/.
set -euo pipefail

seconds="${1:-30}"
shift || true
toolchain="${FUZZ_TOOLCHAIN:-nightly}"
case "$seconds" in
    '' | *[!0-9]* | 0)
        # 0 would mean "no time limit" to libFuzzer.
        echo "usage: $0 [SECONDS (>= 1) [TARGET...]]" >&2
        exit 2
        ;;
esac
cd "$(dirname "$0")"

if ! rustup run "$toolchain" rustc --version >/dev/null 2>&1; then
    echo "==> the '$toolchain' toolchain is missing; trying: rustup toolchain install $toolchain --profile minimal"
    if ! rustup toolchain install "$toolchain" --profile minimal; then
        # Said loudly, not hidden: the fuzz smoke run did not happen on this machine. The
        # link-time no-panic proof (tools/no-panic) still runs on the stable toolchain.
        echo "WARNING: fuzz smoke run SKIPPED: no '$toolchain' toolchain could be installed here" >&2
        exit 0
    fi
fi
if ! cargo fuzz --version >/dev/null 2>&1; then
    echo "==> installing cargo-fuzz"
    cargo +"$toolchain" install cargo-fuzz --locked
fi

# Writes a seed from hex pairs ("00 02 19 …") unless the file exists.
seed() {
    local file="$1" hex="$2"
    [ -e "$file" ] && return 0
    printf '%b' "$(printf '%s' "$hex" | tr -d ' \n' | sed 's/\(..\)/\\x\1/g')" >"$file"
}

# Byte layout: see fuzz_targets/solve_composition.rs. Substance bytes index SUBSTANCES
# (0x11 (NH4)2SO4, 0x19 NaHCO3, 0x1e Na2HPO4, 0x22 H3BO3, 0x25 NaOCl at the time of writing);
# if the table changes a seed still decodes, only to a different composition.
seed_solve_composition() {
    local dir=corpus/solve_composition
    mkdir -p "$dir"
    [ -n "$(ls -A "$dir")" ] && return 0
    # f64, ideal: bicarbonate rinse water + HCl drag-out, then a warm control-loop re-solve.
    seed "$dir/seed-rinse-f64-ideal" \
        "00 02 02 19 01 04 70 3d 02 02 00 01 04 0a 17 02 02 00 80 04 00 00 00 02 01 04 e8 03 05"
    # f64, Davies: ammonium sulfate, phosphate, boric acid, carbonate; solve_with a warm pH.
    seed "$dir/seed-effluent-f64-davies" \
        "02 04 02 11 01 04 7b 14 02 02 1e 01 04 5c 0f 02 02 22 01 04 ae 07 02 00 00 04 66 66 02
         02 00 80 04 00 00 00 03 00 02 00 80 01 01 ff ff ff ff 00"
    # f32, Davies, capacity 3: 40 °C, hypochlorite, a custom weak acid (pK 6.5), chloride,
    # a salt analysis; warm start from a fabricated previous equilibrium.
    seed "$dir/seed-custom-f32-davies" \
        "07 05 04 02 bb 68 02 25 01 04 9a 19 02 03 00 01 00 02 77 b7 02 00 80 00 02 00 80 02 00
         80 00 02 00 80 02 00 80 00 04 ff 7f 03 01 ff 04 ff 7f 03 07 19 02 bb 68 04 00 40 02 02
         00 80 04 00 00 00 04 02 00 80 00 00 00 00 04 00 00 00 04 ff 7f 03 04 00 00 00 04 00 00 00"
}

targets=("$@")
if [ "${#targets[@]}" -eq 0 ]; then
    mapfile -t targets < <(cargo +"$toolchain" fuzz list)
fi
for target in "${targets[@]}"; do
    if declare -F "seed_$target" >/dev/null; then
        "seed_$target"
    fi
    echo "==> fuzzing $target for ${seconds}s"
    cargo +"$toolchain" fuzz run "$target" -- \
        -max_total_time="$seconds" -timeout=10 -rss_limit_mb=2048 -print_final_stats=1
done
