#!/usr/bin/env bash
# Regenerates trace/demo.csv, the recorded trace the firmware's HAL stub replays, with the
# simulator's synthesiser from the same device TOML the firmware is built for. The output is
# the simulator's trace format, committed as it comes out (invented demo data).
#
# Scenario: the demo hoist brake slipping at constant speed while the clamp force builds up
# (`steady`), 400 samples at 1 kHz, with planted sensor faults: gauge A drops out at 60-75 ms,
# gauge B sits on its upper ADC rail at 120-140 ms, gauge C reads 3 kN high at 200-260 ms, and
# all three gauges drop out at 300-320 ms (clamp force lost: the fault output latches).
set -euo pipefail
cd "$(dirname "$0")/../.."
cargo run -q --release -p clampwise-sim --bin clampwise -- synth \
  --config sim/configs/demo-hoist-brake.toml --out firmware-example/trace/demo.csv \
  --scenario steady --rows 400 --seed 7 --quiet \
  --fault dropout:1@0.060..0.075 \
  --fault rail_high:2@0.120..0.140 \
  --fault offset:3@0.200..0.260=300000 \
  --fault dropout:1@0.300..0.320 --fault dropout:2@0.300..0.320 --fault dropout:3@0.300..0.320
