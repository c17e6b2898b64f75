#!/usr/bin/env bash
# bench.sh: the performance table of issue 13 (README, "Performance").
#
# Builds gapflux, writes two large synthetic scans of a 200 mm dished base
# with `gapflux synth` (a 2 M-point binary PLY with normals, 48 MB, and a
# 1.3 M-triangle binary STL, 65 MB), runs `gapflux analyze --out` on each
# RUNS times (default 3) and prints the median wall time, the median
# user+sys CPU time and its system part, the peak resident set size and the
# median count of minor page faults; then the stage benchmarks of the test suite (go test
# -bench), unless STAGES=0.
#
# Needs bash and Go only. Run it from anywhere in the repository:
#
#	scripts/bench.sh              # table and stage benchmarks
#	RUNS=5 STAGES=0 scripts/bench.sh
#	BENCH_DIR=/tmp/gfbench scripts/bench.sh   # keep the scans and outputs
#
# Wall times on a shared or loaded machine are unreliable; the CPU times
# are the figures to compare.
set -euo pipefail

root=$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)
cd "$root"
runs=${RUNS:-3}
stages=${STAGES:-1}
dir=${BENCH_DIR:-}
if [[ -z $dir ]]; then
	dir=$(mktemp -d "${TMPDIR:-/tmp}/gapflux-bench.XXXXXX")
	trap 'rm -rf "$dir"' EXIT
fi
mkdir -p "$dir"

echo "# machine"
echo "go:   $(go version)"
echo "os:   $(uname -srm)"
if [[ -r /proc/cpuinfo ]]; then
	echo "cpu:  $(grep -m1 'model name' /proc/cpuinfo | cut -d: -f2- | sed 's/^ *//'), $(getconf _NPROCESSORS_ONLN) logical CPUs"
fi
if [[ -r /proc/meminfo ]]; then
	echo "mem:  $(awk '/MemTotal/ {printf "%.1f GB", $2/1048576}' /proc/meminfo)"
fi
if [[ -r /proc/loadavg ]]; then
	echo "load: $(cut -d' ' -f1-3 /proc/loadavg) (1, 5, 15 min) at start"
fi
echo "commit: $(git rev-parse --short HEAD 2>/dev/null || echo unknown)"
echo

echo "# build and scans (in $dir)"
go build -o "$dir/gapflux" ./cmd/gapflux
go build -o "$dir/benchrun" ./internal/benchrun
gf="$dir/gapflux"
[[ -s $dir/pan-2m.ply ]] || "$gf" synth --shape dish --diameter-mm 200 --spacing-mm 0.125 --normals --seed 1 --out "$dir/pan-2m.ply"
[[ -s $dir/pan-1m3.stl ]] || "$gf" synth --shape dish --diameter-mm 200 --spacing-mm 0.22 --seed 1 --out "$dir/pan-1m3.stl"
ls -l "$dir/pan-2m.ply" "$dir/pan-1m3.stl" | awk '{printf "%s %.1f MB\n", $NF, $5/1e6}'
echo

echo "# analyze --out (heater mode, default job), $runs runs each"
"$dir/benchrun" -header
"$dir/benchrun" -n "$runs" -label "PLY 2.0 M points" -- "$gf" analyze "$dir/pan-2m.ply" --out "$dir/out-ply" --quiet
"$dir/benchrun" -n "$runs" -label "STL 1.3 M triangles" -- "$gf" analyze "$dir/pan-1m3.stl" --out "$dir/out-stl" --quiet
echo

if [[ $stages != 0 ]]; then
	echo "# stage benchmarks (go test -bench; time per operation)"
	# Decoders: steady state on input in memory (the issue's "files in the
	# page cache"); a few iterations would time the first touch of fresh
	# memory instead, which on a VM costs several ms per MB.
	go test -run '^$' -benchmem -benchtime "${DECODE_BENCHTIME:-2s}" \
		-bench '^(BenchmarkDecodeBinary|BenchmarkDecodeASCII|BenchmarkDecode)$' \
		./scan/ply ./scan/stl ./scan/xyz | grep -E '^(Benchmark|ok|FAIL|pkg)'
	# The stages of analyze on the two scans above (read from
	# GAPFLUX_BENCH_DIR), then synthetic ones.
	GAPFLUX_BENCH_DIR=$dir go test -run '^$' -benchmem -benchtime "${BENCHTIME:-3x}" \
		-bench '^(BenchmarkLevelPLY|BenchmarkLevelSTL|BenchmarkGridPLY2M|BenchmarkGridSTL|BenchmarkLocalOutliersPLY2M|BenchmarkWriteOutputsPLY)$' \
		./scan ./pipeline | grep -E '^(Benchmark|ok|FAIL|pkg)'
	go test -run '^$' -benchmem -benchtime "${BENCHTIME:-3x}" \
		-bench '^(BenchmarkLevel2M|BenchmarkGridCloud2M|BenchmarkRobustFilter|BenchmarkLocalOutliers|BenchmarkMeasureForm|BenchmarkSolveHeater|BenchmarkSolveHeaterFine|BenchmarkSolveHeaterGrid|BenchmarkWriteMap|BenchmarkWriteVTI|BenchmarkAnalyze)$' \
		./scan ./thermal ./pipeline | grep -E '^(Benchmark|ok|FAIL|pkg)'
fi
