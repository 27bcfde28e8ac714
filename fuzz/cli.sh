#!/usr/bin/env bash
# The command-line fuzz campaign of issue 10: the nidus binary on mutated
# inputs and saved-draws files must exit 0 or 2 (never a panic, a signal or
# a hang) and never exit 0 with an empty result.
# Usage: fuzz/cli.sh [ITERATIONS] [SEED]   (builds the release binary first)
set -uo pipefail
cd "$(dirname "$0")/.."
n=${1:-200}; RANDOM=${2:-1}
cargo build --release --quiet || exit 1
bin=target/release/nidus
dir=$(mktemp -d); trap 'rm -rf "$dir"' EXIT
printf ',a,b,c,d\nw,1,1,1,1\nx,1,2.5,1,0\ny,1,1,0,0\nz,3,0,0,1\n' > "$dir/seed.csv"
for i in 1 2; do
  "$bin" null "$dir/seed.csv" --model fixed-rows --seed 3 --draws 40 --shard $i/2 \
    --save-draws "$dir/part$i.tsv" 2>/dev/null || exit 1
done
bad=0
for ((t = 0; t < n; t++)); do
  for src in seed.csv part2.tsv; do
    f="$dir/m.$src"; cp "$dir/$src" "$f"
    size=$(wc -c < "$f")
    case $((RANDOM % 4)) in
      0) head -c $((RANDOM % size)) "$dir/$src" > "$f" ;;                      # cut
      1) printf '%s' "$(sed "$((RANDOM % 6 + 1))s/1/1e308/" "$dir/$src")" > "$f" ;;  # extreme value
      2) sed -i "$((RANDOM % 6 + 1))s/,/;/" "$f" ;;                             # delimiter
      3) printf '\n\n-1\t\f,\n' >> "$f" ;;                                      # trailing junk
    esac
    if [[ $src == seed.csv ]]; then args=(measure "$f"); else args=(merge "$dir/part1.tsv" "$f"); fi
    out=$(timeout 20 "$bin" "${args[@]}" 2>"$dir/err"); rc=$?
    if [[ $rc -ne 0 && $rc -ne 2 ]] || grep -q panicked "$dir/err" || [[ $rc -eq 0 && -z $out ]]; then
      bad=$((bad + 1)); echo "failure (exit $rc) on ${args[*]}:"; head -3 "$dir/err"; cp "$f" "$dir/../nidus-fuzz-fail-$t"
    fi
  done
done
echo "$((2 * n)) runs, $bad failures"
[[ $bad -eq 0 ]]
