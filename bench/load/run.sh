#!/usr/bin/env bash
# Load comparison: POST /v1/evaluations against GET /health/live in the same run, on loopback only.
# Goal: evaluations at >= 0.5x the health endpoint's requests/s with every evaluation durable, p99 <= 10 ms at 32
# connections. Needs wrk (apt-get install -y wrk). Usage: bench/load/run.sh [seconds] [connections]
set -euo pipefail
cd "$(dirname "$0")/../.."
duration="${1:-20}"
connections="${2:-32}"
port=5191
work="$(mktemp -d)"
trap 'kill "${pid:-0}" 2>/dev/null || true; rm -rf "$work"' EXIT

dotnet publish src/DischargeGuard.Api -c Release -o "$work/app" >/dev/null
# Shipped configuration (Information events to console and file), audit file in the temp folder.
# LOG_LEVEL=Warning measures the service without per-request log events.
# The per-caller rate limit (20/s by default) is lifted: this measures the service, not the limiter.
env DischargeGuard__RulesWatch=false Audit__SqlitePath="$work/audit.db" RateLimits__PermitsPerSecond=100000 RateLimits__Burst=100000 Serilog__MinimumLevel__Default="${LOG_LEVEL:-Information}" \
  dotnet "$work/app/DischargeGuard.Api.dll" --urls "http://127.0.0.1:$port" >"$work/service.log" 2>&1 &
pid=$!
ready=0
for _ in $(seq 1 120); do
  if curl -fs "http://127.0.0.1:$port/health/live" >/dev/null 2>&1; then ready=1; break; fi
  sleep 0.5
done
if [ "$ready" != 1 ]; then
  echo "service did not start; its log:" >&2
  cat "$work/service.log" >&2
  exit 1
fi

echo "== warm-up"
wrk -t2 -c"$connections" -d5s -s bench/load/evaluate.lua "http://127.0.0.1:$port/v1/evaluations" >/dev/null
echo "== GET /health/live, ${connections} connections, ${duration}s"
wrk -t2 -c"$connections" -d"${duration}s" --latency "http://127.0.0.1:$port/health/live"
echo "== POST /v1/evaluations, ${connections} connections, ${duration}s"
wrk -t2 -c"$connections" -d"${duration}s" --latency -s bench/load/evaluate.lua "http://127.0.0.1:$port/v1/evaluations"
echo "== audit rows"
sqlite3 "$work/audit.db" "select count(*) from evaluations;" 2>/dev/null || echo "(sqlite3 not installed: apt-get install -y sqlite3)"
