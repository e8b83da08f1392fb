#!/usr/bin/env bash
# Whole-process timing of `stackwise spectrum`: a 250-layer Ta2O5/SiO2 design on a 2 mm
# fused-silica substrate, 10001 wavelengths from 400 to 1400 nm at 45°, CSV to /dev/null.
# Usage: tools/bench_spectrum.sh [path/to/stackwise] [runs]
# (default: target/release/stackwise, 20 runs). Uses hyperfine when it is installed,
# otherwise a loop timed by bash; prints the mean and the fastest run.
set -euo pipefail
bin=${1:-target/release/stackwise}
runs=${2:-20}
dir=$(mktemp -d)
trap 'rm -rf "$dir"' EXIT
design="$dir/bench-250.ron"
{
    echo '// 250 layers of Ta2O5 and SiO2 (thicknesses varied), for timing only.'
    echo '('
    echo '    format: 1,'
    echo '    name: "Timing, 250 layers",'
    echo '    reference_nm: 800.0,'
    echo '    incident: "Air",'
    echo '    substrate: "Fused silica",'
    echo '    substrate_mm: Some(2.0),'
    echo '    exit: "Air",'
    echo '    layers: ['
    for i in $(seq 0 249); do
        if (( i % 2 == 0 )); then m=Ta2O5; else m=SiO2; fi
        echo "        (material: \"$m\", nm: $(( 60 + (i * 37) % 90 )).5),"
    done
    echo '    ],'
    echo '    materials: [],'
    echo ')'
} > "$design"
args=(spectrum "$design" --from 400 --to 1400 --step 0.1 --aoi 45 --out /dev/null)
"$bin" "${args[@]}"
if command -v hyperfine > /dev/null; then
    hyperfine --warmup 3 --runs "$runs" "$bin ${args[*]}"
    exit 0
fi
TIMEFORMAT=%R
times=()
for _ in $(seq "$runs"); do
    # Only the time goes to the capture: the program's own messages are dropped.
    t=$( { time "$bin" "${args[@]}" > /dev/null 2> /dev/null; } 2>&1 )
    times+=("$t")
done
printf '%s\n' "${times[@]}" | sort -n | awk -v runs="$runs" '
    NR == 1 { min = $1 } { sum += $1 }
    END { printf "%d runs: mean %.3f s, fastest %.3f s\n", runs, sum / runs, min }'
