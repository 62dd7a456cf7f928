#!/usr/bin/env bash
# Interleaved before/after timing of the pH solver over the seeded corpus.
#   tools/solve-timing/ab.sh REV [ROUNDS]
# builds this driver against the working tree and against REV (a worktree in /tmp), then alternates
# the two binaries ROUNDS times (default 7) per case and prints the minimum and median ns per solve.
set -euo pipefail
rev=${1:?usage: ab.sh REV [ROUNDS]}
rounds=${2:-7}
here=$(cd "$(dirname "$0")" && pwd)
root=$(cd "$here/../.." && pwd)
before=/tmp/phdose-ab-before
rm -rf "$before" && git -C "$root" worktree prune
git -C "$root" worktree add -q --detach "$before" "$rev"
trap 'git -C "$root" worktree remove --force "$before"' EXIT
(cd "$here" && cargo build -q --release)
(cd "$before/tools/solve-timing" 2>/dev/null || { mkdir -p "$before/tools/solve-timing/src"; cp -r "$here/Cargo.toml" "$here/src" "$before/tools/solve-timing/"; }
 cd "$before/tools/solve-timing" && cargo build -q --release)
after_bin="$here/target/release/phdose-solve-timing"
before_bin="$before/tools/solve-timing/target/release/phdose-solve-timing"
for real in f64 f32; do
    for case in "ideal cold" "ideal warm" "davies cold" "davies warm"; do
        b=(); a=()
        for _ in $(seq "$rounds"); do
            # shellcheck disable=SC2086
            b+=("$("$before_bin" $case 200 $real | awk '{print $1}')")
            # shellcheck disable=SC2086
            a+=("$("$after_bin" $case 200 $real | awk '{print $1}')")
        done
        mid=$(( (rounds + 1) / 2 ))
        stat() { printf '%s\n' "$@" | sort -n | awk -v m="$mid" 'NR==1{min=$1} NR==m{med=$1} END{printf "min %s med %s", min, med}'; }
        echo "$real $case: $rev $(stat "${b[@]}") | working tree $(stat "${a[@]}")"
    done
done
