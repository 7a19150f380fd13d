#!/bin/sh
# Peak memory (maximum resident set size) of `batch population` and
# `batch merge` for populations of 20,000 and 200,000 samples of the
# example drug population (examples/studies/drug-population.json with the
# sample count changed), measured with GNU time (/usr/bin/time, Debian's
# "time" package). Prints one line per run.
#
#   scripts/population-memory.sh [BATCH-BINARY]
#
# Without an argument it builds ./app/batch. Results: bench/population-memory.md.
set -eu
root=$(cd "$(dirname "$0")/.." && pwd)
work=$(mktemp -d)
trap 'rm -rf "$work"' EXIT
bin=${1:-}
if [ -z "$bin" ]; then
	bin=$work/batch
	(cd "$root" && go build -o "$bin" ./app/batch)
fi
if [ ! -x /usr/bin/time ]; then
	echo "population-memory: needs GNU time (apt-get install time)" >&2
	exit 1
fi
for n in 20000 200000; do
	sed -e "s#\"../two-compartment-drug.json\"#\"$root/examples/two-compartment-drug.json\"#" \
		-e "s/\"samples\": 2000,/\"samples\": $n,/" \
		"$root/examples/studies/drug-population.json" >"$work/pop$n.json"
	/usr/bin/time -f "population $n samples, 2 workers: maxrss %M KiB, user %U s, sys %S s, wall %e s" \
		"$bin" population "$work/pop$n.json" --out "$work/out$n" --quiet --workers 2 >/dev/null
done
n=200000
for i in 0 1 2; do
	/usr/bin/time -f "population $n samples, shard $i/3: maxrss %M KiB, user %U s, sys %S s, wall %e s" \
		"$bin" population "$work/pop$n.json" --shard $i/3 --out "$work/parts" --quiet --workers 2 >/dev/null
done
/usr/bin/time -f "merge of the 3 shards of $n samples: maxrss %M KiB, user %U s, sys %S s, wall %e s" \
	"$bin" merge "$work/parts/part-0-of-3.json" "$work/parts/part-1-of-3.json" "$work/parts/part-2-of-3.json" --out "$work/merged" >/dev/null
for f in samples.csv failures.csv readouts.csv bands.csv; do
	cmp -s "$work/out$n/$f" "$work/merged/$f" || { echo "merged $f differs from the single run's" >&2; exit 1; }
done
echo "merged outputs identical to the single run's"
