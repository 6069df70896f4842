#!/usr/bin/env bash
# Replay throughput of the shipped `clampwise` (profile `ship`) against the numpy/pandas peer in
# the same run (benches/replay-throughput/numpy_replay.py), and the replay's peak memory over
# 10⁵ … 10⁷ rows. Figures: BENCHMARKS.md, "Replay throughput".
#
#   bash benches/replay-throughput/run.sh [ROWS]      (default 10⁶; memory sweep with MEMORY=1)
#
# PARQUET_MEMORY=1 adds the peak memory of CSV → Parquet, Parquet → CSV and Parquet → Parquet
# over 10⁵ … 10⁷ rows (binary rebuilt with `--features parquet`), the Parquet traces written by
# pyarrow (pinned below) in row groups of 64 Ki rows: with its defaults (dictionaries, 1 MiB
# pages) and with 64 KiB pages and no dictionary.
#
# Wall-clock figures: run on an idle machine; each is the median of three runs. Python, numpy
# and pandas come from the package index into target/bench-venv (pinned below).
set -euo pipefail
cd "$(dirname "$0")/../.."
rows=${1:-1000000}
work=target/replay-throughput
mkdir -p "$work"
cfg=sim/configs/demo-hoist-brake.toml

cargo build --profile ship -p clampwise-sim --bin clampwise --locked -q
cw=${CARGO_TARGET_DIR:-target}/ship/clampwise

venv=target/bench-venv
if [ ! -x "$venv/bin/python" ]; then
    python3 -m venv "$venv"
    "$venv/bin/pip" install -q numpy==2.3.5 pandas==2.3.3
fi

trace="$work/hoist-$rows.csv"
[ -s "$trace" ] || "$cw" synth -q -c "$cfg" --rows "$rows" -o "$trace" >/dev/null

# Median of three wall-clock times of a command, in seconds.
median3() {
    local t=()
    for _ in 1 2 3; do
        local s e
        s=$(date +%s.%N)
        "$@" >/dev/null 2>&1
        e=$(date +%s.%N)
        t+=("$(echo "$e - $s" | bc -l)")
    done
    printf '%s\n' "${t[@]}" | sort -g | sed -n 2p
}

replay=$(median3 "$cw" replay -q -c "$cfg" "$trace" -o "$work/estimates.csv")
numpy=$(median3 "$venv/bin/python" benches/replay-throughput/numpy_replay.py "$cfg" "$trace" "$work/numpy.csv")
printf 'rows %d\n' "$rows"
printf 'clampwise replay CSV -> CSV  %.3f s  %.2f M rows/s\n' "$replay" "$(echo "$rows / $replay / 1000000" | bc -l)"
printf 'numpy/pandas peer CSV -> CSV %.3f s  %.2f M rows/s\n' "$numpy" "$(echo "$rows / $numpy / 1000000" | bc -l)"
printf 'replay is %.2fx the peer\n' "$(echo "$numpy / $replay" | bc -l)"
printf 'the peer, one more run: %s\n' "$("$venv/bin/python" benches/replay-throughput/numpy_replay.py "$cfg" "$trace" "$work/numpy.csv" 2>&1)"

# Two traces one after the other, then both at once with -j 2.
cp -f "$trace" "$work/second.csv"; mkdir -p "$work/j"
one=$(median3 "$cw" replay -q -j 1 -c "$cfg" "$trace" "$work/second.csv" --out-dir "$work/j")
two=$(median3 "$cw" replay -q -j 2 -c "$cfg" "$trace" "$work/second.csv" --out-dir "$work/j")
printf -- '-j 2 over -j 1 on two traces: %.2fx (%.3f s, %.3f s)\n' "$(echo "$one / $two" | bc -l)" "$one" "$two"

if [ "${MEMORY:-0}" = 1 ]; then
    for n in 100000 1000000 10000000; do
        t="$work/hoist-$n.csv"
        [ -s "$t" ] || "$cw" synth -q -c "$cfg" --rows "$n" -o "$t" >/dev/null
        kb=$( { /usr/bin/time -f '%M' "$cw" replay -q -c "$cfg" "$t" -o "$work/m.csv" >/dev/null; } 2>&1 | tail -1)
        printf 'peak memory at %d rows: %.1f MiB\n' "$n" "$(echo "$kb / 1024" | bc -l)"
    done
fi

if [ "${PARQUET_MEMORY:-0}" = 1 ]; then
    cargo build --profile ship -p clampwise-sim --bin clampwise --features parquet --locked -q
    pyarrow=26.0.1
    "$venv/bin/python" -c "import pyarrow, sys; sys.exit(pyarrow.__version__ != '$pyarrow')" 2>/dev/null ||
        "$venv/bin/pip" install -q "pyarrow==$pyarrow"
    # CSV trace (two comment lines) → Parquet: row groups of 64 Ki rows; "small": 64 KiB pages,
    # no dictionary.
    to_parquet='import sys, pyarrow.csv as pc, pyarrow.parquet as pq
t = pc.read_csv(sys.argv[1], read_options=pc.ReadOptions(skip_rows=2))
kw = dict(data_page_size=64 * 1024, use_dictionary=False) if sys.argv[3] == "small" else {}
pq.write_table(t, sys.argv[2], row_group_size=64 * 1024, **kw)'
    peak() { { /usr/bin/time -f '%M' "$cw" replay -q -c "$cfg" "$1" -o "$2" >/dev/null; } 2>&1 | tail -1; }
    for n in 100000 1000000 10000000; do
        t="$work/hoist-$n.csv"
        [ -s "$t" ] || "$cw" synth -q -c "$cfg" --rows "$n" -o "$t" >/dev/null
        for pages in default small; do
            p="$work/hoist-$n-$pages.parquet"
            [ -s "$p" ] || "$venv/bin/python" -c "$to_parquet" "$t" "$p" "$pages"
        done
        printf 'peak KiB at %d rows: CSV->CSV %s, CSV->Parquet %s' "$n" \
            "$(peak "$t" "$work/m.csv")" "$(peak "$t" "$work/m.parquet")"
        for pages in default small; do
            p="$work/hoist-$n-$pages.parquet"
            printf ', %s pages: Parquet->CSV %s, Parquet->Parquet %s' "$pages" \
                "$(peak "$p" "$work/m.csv")" "$(peak "$p" "$work/m.parquet")"
        done
        printf '\n'
    done
fi
