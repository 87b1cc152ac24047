#!/usr/bin/env bash
# Same-run A/B of two published builds of driftline on one file: each round times the bare
# loop (from OLD's benchmark), OLD's replay and NEW's replay, one after the other, and prints
# wall and processor time (user + system) and the ratios; at the end it checks that the two
# builds wrote byte-identical outputs.
#   usage: replay-ab.sh FILE ROUNDS OLD_DIR NEW_DIR
# where each DIR holds a `dotnet publish tests/Driftline.Benchmarks -c Release -r linux-x64`.
set -euo pipefail
file=$1; rounds=$2; old=$3; new=$4
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
timed() { /usr/bin/time -o "$work/t" -f "%e %U %S" "$@" >/dev/null 2>&1; cat "$work/t"; }
for _ in $(seq 1 "$rounds"); do
  b=$(timed "$old/Driftline.Benchmarks" bare "$file")
  o=$(timed "$old/driftline" replay "$file" --out "$work/old")
  n=$(timed "$new/driftline" replay "$file" --out "$work/new")
  echo "$b|$o|$n" | awk -F'|' '{split($1,b," "); split($2,o," "); split($3,n," ");
    printf "round: bare %.2f s (cpu %.2f) | old %.2f s (cpu %.2f), ratio %.2f | new %.2f s (cpu %.2f), ratio %.2f | new/old wall %.2f, cpu %.2f\n",
      b[1], b[2]+b[3], o[1], o[2]+o[3], b[1]/o[1], n[1], n[2]+n[3], b[1]/n[1], n[1]/o[1], (n[2]+n[3])/(o[2]+o[3])}'
done
for f in predictions.jsonl alerts.jsonl metrics.csv dead-letters.jsonl model.json; do
  if cmp -s "$work/old/$f" "$work/new/$f"; then echo "$f identical"; else echo "$f DIFFERS"; fi
done
