#!/usr/bin/env bash
# Coverage-guided fuzzing of HumWatch's readers (docs/reliability.md, "Fuzzing").
#
#   tests/HumWatch.Fuzz/fuzz.sh TARGET|all [EXECUTIONS | --seconds S]   default 1 000 000 executions per target
#   tests/HumWatch.Fuzz/fuzz.sh --short                                 every target for 30 s (what .ci/run runs)
#   tests/HumWatch.Fuzz/fuzz.sh --seeds                                 re-creates the committed seeds/ and dictionaries
#
# Targets: edf, bdf, csv, wire, settings. Builds Release, instruments the HumWatch assemblies (and the configuration
# libraries the settings loader runs) with SharpFuzz, runs afl-fuzz (Debian's afl++) once per target with the
# committed seeds, then prints executions, exec/s, corpus size, crashes and hangs. Exits 1 when any target has a crash
# or a hang (each one is replayed to show its exception), 2 on bad arguments or a missing tool.
# Output: artifacts/fuzz/ (FUZZ_OUT overrides): bin/ the instrumented build, plain/ the same uninstrumented (for
# replay: `dotnet artifacts/fuzz/plain/HumWatch.Fuzz.dll replay TARGET FILE...`), findings/TARGET/ afl-fuzz's folder.
set -euo pipefail

here="$(cd "$(dirname "$0")" && pwd)"
repo="$(cd "$here/../.." && pwd)"
out="${FUZZ_OUT:-$repo/artifacts/fuzz}"
all_targets=(edf bdf csv wire settings)
short_seconds=30

usage() { sed -n '3,7p' "$0" | sed 's/^# \{0,1\}//' >&2; exit 2; }

targets=() executions=1000000 seconds=""
case "${1:-}" in
  --short) targets=("${all_targets[@]}"); seconds=$short_seconds; executions="" ;;
  --seeds) mode=seeds ;;
  all) targets=("${all_targets[@]}") ;;
  edf|bdf|csv|wire|settings) targets=("$1") ;;
  *) usage ;;
esac
if [ "${mode:-}" != seeds ] && [ "${1:-}" != --short ]; then
  case "${2:-}" in
    "") ;;
    --seconds) [[ "${3:-}" =~ ^[0-9]+$ ]] || usage; seconds=$3; executions="" ;;
    *) [[ "$2" =~ ^[0-9]+$ ]] || usage; executions=$2 ;;
  esac
fi

export DOTNET_CLI_TELEMETRY_OPTOUT=1 DOTNET_NOLOGO=1 DOTNET_SKIP_FIRST_TIME_EXPERIENCE=1

echo "== building tests/HumWatch.Fuzz (Release)"
rm -rf "$out/bin" "$out/plain"
dotnet publish "$here/HumWatch.Fuzz.csproj" -c Release -o "$out/plain" --nologo -v quiet -p:UseAppHost=false >/dev/null
# An instrumented assembly only runs under afl-fuzz (it writes to afl-fuzz's coverage map), so seeds and replays use
# the plain copy.
cp -r "$out/plain" "$out/bin"

if [ "${mode:-}" = seeds ]; then
  dotnet "$out/plain/HumWatch.Fuzz.dll" seeds "$here/seeds"
  echo "seeds written to $here/seeds"
  exit 0
fi

command -v afl-fuzz >/dev/null || { echo "afl-fuzz not found: apt-get install afl++" >&2; exit 2; }

echo "== instrumenting with SharpFuzz"
(cd "$repo" && dotnet tool restore >/dev/null)
for dll in HumWatch.Core.dll HumWatch.Formats.dll HumWatch.Host.dll; do
  (cd "$repo" && dotnet sharpfuzz "$out/bin/$dll" >/dev/null)
done
# The configuration libraries come with the build only when no shared framework supplies them; since the host takes
# ASP.NET Core's shared framework (the live page), they load from there and cannot be instrumented: the settings
# target then covers our own loader and binder calls, not the framework's JSON parsing.
for dll in Microsoft.Extensions.Configuration.dll Microsoft.Extensions.Configuration.Json.dll \
           Microsoft.Extensions.Configuration.FileExtensions.dll Microsoft.Extensions.Configuration.Binder.dll; do
  if [ -f "$out/bin/$dll" ]; then
    (cd "$repo" && dotnet sharpfuzz "$out/bin/$dll" >/dev/null)
  fi
done

# afl-fuzz as an ordinary user would run it: no core_pattern or CPU governor changes (root-only), no CPU pinning (the
# machine is shared), the dotnet host is not an instrumented binary (SharpFuzz instruments the managed code).
export AFL_SKIP_CPUFREQ=1 AFL_I_DONT_CARE_ABOUT_MISSING_CRASHES=1 AFL_NO_AFFINITY=1 AFL_SKIP_BIN_CHECK=1 \
       AFL_NO_UI=1 AFL_FAST_CAL=1
# Memory bounds: afl-fuzz's limit on the address space, and the managed heap's own ceiling (an allocation past it is
# an OutOfMemoryException, i.e. a crash); the targets also check their allocations per input (AllocationBudget).
memory_limit_mb=4096
export DOTNET_GCHeapHardLimit=0x20000000 DOTNET_gcServer=0 DOTNET_TieredPGO=0

status=0
summary=()
for target in "${targets[@]}"; do
  findings="$out/findings/$target"
  rm -rf "$findings"
  mkdir -p "$findings"
  limit=(-E "$executions"); [ -n "$seconds" ] && limit=(-V "$seconds")
  echo "== fuzzing $target (${executions:+$executions executions}${seconds:+$seconds s})"
  set +e
  afl-fuzz -i "$here/seeds/$target" -o "$findings" -x "$here/seeds/$target.dict" -s 13 -t 5000 -m "$memory_limit_mb" "${limit[@]}" \
    -- dotnet "$out/bin/HumWatch.Fuzz.dll" run "$target" >"$findings/afl.log" 2>&1
  afl_status=$?
  set -e
  stats="$findings/default/fuzzer_stats"
  if [ ! -f "$stats" ]; then
    echo "afl-fuzz did not start for $target (exit $afl_status); last lines of $findings/afl.log:" >&2
    tail -n 20 "$findings/afl.log" >&2
    status=1
    continue
  fi

  stat() { awk -F' *: *' -v k="$1" '$1 == k { print $2 }' "$stats"; }
  crashes=$(stat saved_crashes) hangs=$(stat saved_hangs)
  line=$(printf '%-9s executions %10s  exec/s %8s  corpus %5s  crashes %3s  hangs %3s  run time %6s s' \
    "$target" "$(stat execs_done)" "$(stat execs_per_sec)" "$(stat corpus_count)" "$crashes" "$hangs" "$(stat run_time)")
  echo "$line"
  summary+=("$line")
  if [ "${crashes:-0}" != 0 ] || [ "${hangs:-0}" != 0 ]; then
    status=1
    echo "-- $target: inputs afl-fuzz kept (replayed below): $findings/default/crashes $findings/default/hangs" >&2
    find "$findings/default/crashes" "$findings/default/hangs" -type f -name 'id:*' -print0 \
      | xargs -0 -r timeout 120 dotnet "$out/plain/HumWatch.Fuzz.dll" replay "$target" >&2 || true
  fi
done

echo "== fuzzing summary"
printf '%s\n' "${summary[@]}"
if [ "$status" -ne 0 ]; then
  echo "fuzzing found crashes or hangs (or afl-fuzz failed); see above" >&2
fi
exit "$status"
