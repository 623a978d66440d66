#!/usr/bin/env bash
# End-to-end wall time and peak memory of `stackopt optimize` on the built-in demo,
# including plots and report (run by hand: bash benchmarks/bench_cli.sh).
set -euo pipefail
out=$(mktemp -d)
stackopt=${STACKOPT:-stackopt}
for i in 1 2 3; do
  rm -rf "$out/run"
  if [ -x /usr/bin/time ]; then
    /usr/bin/time -f "run $i: %e s wall, %M kB peak RSS" "$stackopt" optimize --out "$out/run" --quiet
  else
    python3 - "$stackopt" "$out/run" "$i" <<'PY'
import resource, subprocess, sys, time
t = time.perf_counter()
subprocess.run([sys.argv[1], "optimize", "--out", sys.argv[2], "--quiet"], check=True)
dt = time.perf_counter() - t
rss = resource.getrusage(resource.RUSAGE_CHILDREN).ru_maxrss
print(f"run {sys.argv[3]}: {dt:.2f} s wall, {rss} kB peak RSS")
PY
  fi
done
rm -rf "$out"
