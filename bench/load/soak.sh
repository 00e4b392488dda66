#!/usr/bin/env bash
# Soak: the service at a fixed request rate for a long time, its working set sampled every minute, then the audit rows
# counted against the 200s received. Not part of CI (it runs for half an hour); the figures go to docs/reliability.md.
# Usage: bench/load/soak.sh [minutes=30] [requests-per-second=640]
#   The default rate is about half the single-evaluation peak measured by bench/load/run.sh on the 2-core machine.
set -euo pipefail
cd "$(dirname "$0")/../.."
minutes="${1:-30}"
rate="${2:-640}"
port=5193
work="$(mktemp -d)"
trap 'kill "${pid:-0}" 2>/dev/null || true; rm -rf "$work"' EXIT

dotnet publish src/DischargeGuard.Api -c Release -o "$work/app" >/dev/null
dotnet build bench/DischargeGuard.Load -c Release -o "$work/load" >/dev/null

# Shipped configuration (Information events to console and file), the audit file in the temp folder.
# The per-caller rate limit (20/s by default) is lifted: one load generator stands for many callers.
env DischargeGuard__RulesWatch=false Audit__SqlitePath="$work/audit.db" RateLimits__PermitsPerSecond=100000 RateLimits__Burst=100000 \
  dotnet "$work/app/DischargeGuard.Api.dll" --urls "http://127.0.0.1:$port" >"$work/service.log" 2>&1 &
pid=$!
for _ in $(seq 1 120); do
  if curl -fs "http://127.0.0.1:$port/health/ready" >/dev/null 2>&1; then break; fi
  sleep 0.5
done
curl -fs "http://127.0.0.1:$port/health/ready" >/dev/null || { echo "service did not start; its log:" >&2; cat "$work/service.log" >&2; exit 1; }

echo "== soak: ${rate} requests/s for ${minutes} min against pid ${pid}"
status=0
dotnet "$work/load/DischargeGuard.Load.dll" --url "http://127.0.0.1:$port" --pid "$pid" --rate "$rate" --minutes "$minutes" \
  --body bench/load/evaluate.json --sample-seconds 60 || status=$?
echo "== audit rows (must equal the 200s above)"
sqlite3 "$work/audit.db" "select count(*) from evaluations;" 2>/dev/null || echo "(sqlite3 not installed: apt-get install -y sqlite3)"
echo "== audit file"
du -sh "$work"/audit.db* 2>/dev/null || true
echo "== service errors in its log"
grep -c '"@l":"Error"' "$work/service.log" || true
exit "$status"
