#!/usr/bin/env bash
# Batch throughput: POST /v1/evaluations/batch with 10 000 single-stage items, every item audited before its answer.
# Goal: >= 80 000 stage evaluations/s with the SQLite audit file; the PostgreSQL figure beside it.
# Usage: bench/load/batch.sh [sqlite|postgresql] [batches] [parallel]
#   postgresql starts a throwaway server from /usr/lib/postgresql/*/bin (as the postgres user when run as root).
set -euo pipefail
cd "$(dirname "$0")/../.."
provider="${1:-sqlite}"
batches="${2:-6}"
parallel="${3:-1}"
items=10000
port=5192
work="$(mktemp -d)"
chmod 755 "$work"
cleanup() {
  kill "${pid:-0}" 2>/dev/null || true
  if [ -n "${pgbin:-}" ] && [ -f "$work/pg/data/postmaster.pid" ]; then as_pg "$pgbin/pg_ctl" -D "$work/pg/data" stop -m fast >/dev/null 2>&1 || true; fi
  rm -rf "$work"
}
trap cleanup EXIT
as_pg() { if [ "$(id -u)" = 0 ]; then runuser -u postgres -- "$@"; else "$@"; fi; }

dotnet publish src/DischargeGuard.Api -c Release -o "$work/app" >/dev/null

# One invented stage with equipment, so every rule that applies is evaluated (no measurement: no history lookups).
item='{"asset":"C-204B","site":{"id":"marlow-fen","barometricPressure":"101.3 kPa"},"gas":{"preset":"dry-air"},"stages":[{"suction":{"pressure":"1 barg","temperature":"30 °C"},"discharge":{"pressure":"3.2 barg"},"efficiency":{"isentropic":0.8,"uncertainty":0.03},"equipment":{"compressorType":"recip-lubricated","lubricant":"mineral-vdl","valveMaterial":"peek","sealMaterial":"fkm"}}]}'
seq "$items" | awk -v item="$item" 'BEGIN { printf "{\"evaluations\":[" } NR > 1 { printf "," } { printf "%s", item } END { printf "]}" }' >"$work/batch.json"

# Warning level except the one summary event per batch (items, time evaluating, time waiting for commits).
settings=(DischargeGuard__RulesWatch=false Serilog__MinimumLevel__Default=Warning
  Serilog__MinimumLevel__Override__DischargeGuard.Evaluations.Batch=Information
  Serilog__MinimumLevel__Override__DischargeGuard.Evaluations.Batch.Items=Warning Audit__SqlitePath="$work/audit.db")
if [ "$provider" = postgresql ]; then
  pgbin="$(ls -d /usr/lib/postgresql/*/bin 2>/dev/null | sort -V | tail -1)"
  [ -x "$pgbin/initdb" ] || { echo "PostgreSQL binaries not found: apt-get install -y postgresql" >&2; exit 1; }
  mkdir -p "$work/pg"
  if [ "$(id -u)" = 0 ]; then chown -R postgres:postgres "$work/pg"; fi
  as_pg "$pgbin/initdb" -D "$work/pg/data" -U postgres --auth=trust -E UTF8 --no-instructions >/dev/null
  as_pg "$pgbin/pg_ctl" -D "$work/pg/data" -o "-k $work/pg -p 5493 -c listen_addresses=127.0.0.1" -l "$work/pg/log" start -w >/dev/null
  settings+=(Audit__Provider=postgresql "Audit__ConnectionString=Host=127.0.0.1;Port=5493;Username=postgres;Database=postgres")
fi

env "${settings[@]}" dotnet "$work/app/DischargeGuard.Api.dll" --urls "http://127.0.0.1:$port" >"$work/service.log" 2>&1 &
pid=$!
for _ in $(seq 1 120); do
  curl -fs "http://127.0.0.1:$port/health/live" >/dev/null 2>&1 && break
  sleep 0.5
done

post() {
  curl -s -o "$work/out.$1.json" -w '%{http_code} %{time_total}\n' -H 'Content-Type: application/json' \
    --data-binary @"$work/batch.json" "http://127.0.0.1:$port/v1/evaluations/batch"
}

echo "== warm-up (2 batches)"
post w1 >/dev/null
post w2 >/dev/null
echo "== $batches batches of $items items, $parallel at a time, audit on $provider"
start=$(date +%s.%N)
posts=()
for b in $(seq 1 "$batches"); do
  post "$b" &
  posts+=($!)
  # Wait for the posts only: a bare `wait` would wait for the service too.
  if (( b % parallel == 0 )); then wait "${posts[@]}"; posts=(); fi
done
if (( ${#posts[@]} > 0 )); then wait "${posts[@]}"; fi
end=$(date +%s.%N)
ok=$(cat "$work"/out.[0-9]*.json | grep -o '"status":200' | wc -l)
awk -v n="$((batches * items))" -v ok="$ok" -v s="$start" -v e="$end" \
  'BEGIN { t = e - s; printf "items %d, answered 200: %d, wall %.2f s, %.0f stage evaluations/s\n", n, ok, t, n / t }'
echo "== audit rows (warm-up included)"
if [ "$provider" = sqlite ]; then
  sqlite3 "$work/audit.db" "select count(*) from evaluations;" 2>/dev/null || echo "(sqlite3 not installed)"
else
  as_pg "$pgbin/psql" -h "$work/pg" -p 5493 -U postgres -At -c "select count(*) from evaluations;"
fi
echo "== the service's summary of the last batches"
grep 'Batch of' "$work/service.log" | tail -3 | sed 's/.*"@m":"//; s/","@i".*//' || true
