#!/usr/bin/env bash
# Runs the Dockerfile's steps outside Docker (no engine runs on the build machines) and checks the result:
#
#   1. build stage:   dotnet publish of the service, as the Dockerfile's RUN does;
#   2. runtime stage: the published files read-only, /app/data -> the data folder, the rules copied and made
#                     read-only, a writable data folder and a writable temp folder, and a read-only HOME;
#   3. run:           the Dockerfile's ENTRYPOINT with the Dockerfile's ENV (read from the Dockerfile itself, with
#                     /app, /data and /rules mapped to the folders above and port 8080 to a free loopback port),
#                     as a non-root user (UID 1654 like the image when run as root, else the current user),
#                     plus one API key given by the Auth__Keys__0__* variables;
#   4. checks:        /health/live and /health/ready answer, the HEALTHCHECK command (the service's --probe mode)
#                     exits 0 when ready and 1 when nothing listens, a request without a key is refused, one C-204B
#                     evaluation answers 200 with a rule digest, the record verifies, the audit file and the log
#                     file are under the data folder, nothing was written to the app, rules or home folders,
#                     the service stops cleanly on SIGTERM, and with DischargeGuard__Replicas=2 on SQLite it refuses
#                     to start (the guard the Kubernetes overlays rely on).
#
# Exits 0 when every check passed, non-zero on the first failure. Nothing here needs Docker or the network.
# Environment: VERIFY_KEEP=1 keeps the work folder; VERIFY_USER=name runs the service as that user instead of the
# Dockerfile's UID (root only).
set -Eeuo pipefail

repo="$(cd "$(dirname "${BASH_SOURCE[0]}")/.." && pwd)"
dockerfile="$repo/Dockerfile"
step() { printf '\n== %s\n' "$*"; }
ok() { printf '   ok: %s\n' "$*"; }
fail() { printf '   FAIL: %s\n' "$*" >&2; exit 1; }
trap 'rc=$?; [[ $rc -ne 0 ]] && printf "verify-container: FAILED (line %s, exit %s)\n" "$LINENO" "$rc" >&2' ERR

for tool in dotnet curl; do
    command -v "$tool" >/dev/null || fail "$tool is not on PATH"
done
[[ -f "$dockerfile" ]] || fail "no Dockerfile at $dockerfile"

work="$(mktemp -d "${TMPDIR:-/tmp}/dischargeguard-verify.XXXXXX")"
chmod 0755 "$work"
server_pid=""
cleanup() {
    if [[ -n "$server_pid" ]] && kill -0 "$server_pid" 2>/dev/null; then
        kill -TERM "$server_pid" 2>/dev/null || true
        wait "$server_pid" 2>/dev/null || true
    fi
    if [[ "${VERIFY_KEEP:-0}" == 1 ]]; then
        echo "work folder kept: $work"
    else
        chmod -R u+w "$work" 2>/dev/null || true
        rm -rf "$work"
    fi
}
trap cleanup EXIT

# ---------------------------------------------------------------------------------------------------------------
step "Dockerfile: runtime stage's ENV, USER, ENTRYPOINT and HEALTHCHECK"
# The runtime stage is everything after the last FROM; continuation lines are joined.
runtime_stage="$(awk '/^FROM /{buf=""} {buf=buf $0 "\n"} END{printf "%s", buf}' "$dockerfile" | sed -e ':a' -e '/\\$/N; s/\\\n//; ta')"
env_line="$(grep -E '^ENV ' <<<"$runtime_stage" | sed -E 's/^ENV +//' | tr -s ' ' | tr '\n' ' ')"
user_line="$(grep -E '^USER ' <<<"$runtime_stage" | tail -n 1 | awk '{print $2}')"
entrypoint="$(grep -E '^ENTRYPOINT ' <<<"$runtime_stage" | tail -n 1)"
healthcheck="$(grep -E '^HEALTHCHECK ' <<<"$runtime_stage" | tail -n 1)"
[[ -n "$env_line" ]] || fail "no ENV in the runtime stage"
[[ -n "$user_line" && "${user_line%%:*}" != 0 && "${user_line%%:*}" != root ]] || fail "the runtime stage has no non-root USER (found '${user_line}')"
[[ "$entrypoint" == *'"dotnet"'*'"/app/DischargeGuard.Api.dll"'* ]] || fail "unexpected ENTRYPOINT: $entrypoint"
[[ "$healthcheck" == *'"--probe"'* ]] || fail "HEALTHCHECK does not use the service's --probe mode: $healthcheck"
probe_url_in_image="$(grep -oE 'http://127\.0\.0\.1:[0-9]+/health/ready' <<<"$healthcheck")" || fail "HEALTHCHECK probes no loopback /health/ready URL"
ok "USER $user_line; ENTRYPOINT and HEALTHCHECK ($probe_url_in_image) read"

# ---------------------------------------------------------------------------------------------------------------
step "build stage: dotnet publish (Release, UseAppHost=false)"
app="$work/app"
dotnet publish "$repo/src/DischargeGuard.Api/DischargeGuard.Api.csproj" -c Release -o "$app" -p:UseAppHost=false -nologo -v quiet \
    || fail "dotnet publish failed"
[[ -f "$app/DischargeGuard.Api.dll" && -f "$app/appsettings.json" ]] || fail "publish output lacks DischargeGuard.Api.dll or appsettings.json"
ok "published to $app"

# ---------------------------------------------------------------------------------------------------------------
step "runtime stage: read-only app and rules, writable data and temp, read-only home"
data="$work/data"
rules="$work/rules"
tmpdir="$work/tmp"
home="$work/home"
mkdir -p "$data/logs" "$rules" "$tmpdir" "$home"
cp -R "$repo/rules/." "$rules/"
ln -s "$data" "$app/data"              # the Dockerfile's `ln -s /data /app/data`
chmod -R a-w "$rules" "$app" "$home"

if [[ $(id -u) -eq 0 ]]; then
    if [[ -n "${VERIFY_USER:-}" ]]; then
        run_uid="$(id -u "$VERIFY_USER")"; run_gid="$(id -g "$VERIFY_USER")"
        as_user=(runuser -u "$VERIFY_USER" --)
    else
        run_uid="${user_line%%:*}"; run_gid="${user_line#*:}"; [[ "$run_gid" == "$user_line" ]] && run_gid="$run_uid"
        command -v setpriv >/dev/null || fail "setpriv (util-linux) is needed to run as UID $run_uid; or set VERIFY_USER=nobody"
        as_user=(setpriv --reuid="$run_uid" --regid="$run_gid" --clear-groups --)
    fi
    chown -R "$run_uid:$run_gid" "$data" "$tmpdir"
else
    run_uid="$(id -u)"
    as_user=()
    echo "   (not root: the service runs as the current user, UID $run_uid)"
fi
[[ "$run_uid" -ne 0 ]] || fail "refusing to run the service as root"
chmod 0750 "$data"
chmod 0700 "$tmpdir"

if "${as_user[@]}" test -w "$rules/default.yaml" || "${as_user[@]}" test -w "$app/DischargeGuard.Api.dll" || "${as_user[@]}" test -w "$home"; then
    fail "the service's user can write to the rules, the app or the home folder"
fi
"${as_user[@]}" test -w "$data" || fail "the service's user cannot write the data folder"
ok "UID $run_uid: rules, app and home read-only; data and temp writable"

# ---------------------------------------------------------------------------------------------------------------
step "environment: the Dockerfile's ENV, mapped to the folders above"
port=""
for _ in $(seq 1 50); do
    candidate=$((20000 + RANDOM % 20000))
    if ! (exec 3<>"/dev/tcp/127.0.0.1/$candidate") 2>/dev/null; then port="$candidate"; break; fi
done
[[ -n "$port" ]] || fail "no free loopback port found"
base="http://127.0.0.1:$port"

map_path() {
    local v="$1"
    v="${v//\/app/$app}"; v="${v//\/data/$data}"; v="${v//\/rules/$rules}"
    v="${v//http:\/\/+:8080/$base}"; v="${v//:8080/:$port}"
    printf '%s' "$v"
}
declare -a service_env=()
read -r -a env_pairs <<<"$env_line"
for pair in "${env_pairs[@]}"; do
    [[ "$pair" == *=* ]] || fail "ENV entry without '=': $pair (use KEY=VALUE)"
    key="${pair%%=*}"; value="${pair#*=}"
    service_env+=("$key=$(map_path "$value")")
done

# One key, exactly as an operator gives it (the hash from the service's own new-key command).
key_output="$(dotnet "$app/DischargeGuard.Api.dll" new-key --id verify-tablet --role technician)" || fail "new-key failed"
api_key="$(sed -n '2p' <<<"$key_output")"
key_hash="$(grep -oE '"sha256":"[0-9a-f]{64}"' <<<"$key_output" | cut -d'"' -f4)"
[[ -n "$api_key" && -n "$key_hash" ]] || fail "could not read the key and hash from new-key's output"
service_env+=(
    "HOME=$home" "TMPDIR=$tmpdir" "PATH=$PATH"
    "Auth__Keys__0__id=verify-tablet" "Auth__Keys__0__sha256=$key_hash" "Auth__Keys__0__roles__0=technician"
)
printf '   %s\n' "${service_env[@]}" | grep -v -E '^   (PATH|Auth__Keys__0__sha256)='
ok "port $port"

# ---------------------------------------------------------------------------------------------------------------
step "run: dotnet /app/DischargeGuard.Api.dll as UID $run_uid"
touch "$work/started"
cd "$work"   # the working directory is not the content root; ASPNETCORE_CONTENTROOT decides
env -i "${service_env[@]}" "${as_user[@]}" dotnet "$app/DischargeGuard.Api.dll" >"$work/service.out" 2>&1 &
server_pid=$!

ready=""
for _ in $(seq 1 120); do
    kill -0 "$server_pid" 2>/dev/null || { tail -n 40 "$work/service.out" >&2; fail "the service exited during start-up"; }
    if curl -fsS -o "$work/ready.json" "$base/health/ready" 2>/dev/null; then ready=1; break; fi
    sleep 0.5
done
[[ -n "$ready" ]] || { tail -n 40 "$work/service.out" >&2; fail "/health/ready did not answer 200 within 60 s"; }
ok "/health/ready: $(cat "$work/ready.json")"
[[ "$(curl -s -o /dev/null -w '%{http_code}' "$base/health/live")" == 200 ]] || fail "/health/live did not answer 200"
ok "/health/live: 200"

service_uid="$(awk '/^Uid:/{print $2}' "/proc/$(pgrep -P "$server_pid" -x dotnet || echo "$server_pid")/status" 2>/dev/null || true)"
[[ -z "$service_uid" || "$service_uid" -eq "$run_uid" ]] || fail "the service runs as UID $service_uid, not $run_uid"
ok "the service process runs as UID ${service_uid:-$run_uid}"

# ---------------------------------------------------------------------------------------------------------------
step "HEALTHCHECK: the service's --probe mode"
probe_url="$(map_path "$probe_url_in_image")"
env -i "${service_env[@]}" "${as_user[@]}" timeout 20 dotnet "$app/DischargeGuard.Api.dll" --probe "$probe_url" >"$work/probe.out" 2>&1 \
    || { cat "$work/probe.out" >&2; fail "--probe $probe_url did not exit 0 while the service is ready"; }
ok "--probe $probe_url: exit 0 ($(cat "$work/probe.out"))"
closed_rc=0
env -i "${service_env[@]}" "${as_user[@]}" timeout 20 dotnet "$app/DischargeGuard.Api.dll" --probe "http://127.0.0.1:1/health/ready" >"$work/probe-closed.out" 2>&1 \
    || closed_rc=$?
[[ $closed_rc -eq 1 ]] || fail "--probe against a closed port exited $closed_rc, expected 1"
ok "--probe against a closed port: exit 1 ($(cat "$work/probe-closed.out"))"

# ---------------------------------------------------------------------------------------------------------------
step "evaluate: one C-204B stage at marlow-fen"
request='{
  "asset": "C-204B",
  "site": {"id": "marlow-fen", "elevation": "4 m"},
  "gas": {"composition": {"CH4": 0.91, "C2H6": 0.05, "C3H8": 0.01, "N2": 0.02, "CO2": 0.01}},
  "stages": [
    {
      "suction": {"pressure": "2.4 barg", "temperature": "27 °C"},
      "discharge": {"pressure": "7.9 barg"},
      "efficiency": {"isentropic": 0.82}
    }
  ]
}'
unauth="$(curl -s -o /dev/null -w '%{http_code}' -H 'Content-Type: application/json' --data-binary "$request" "$base/v1/evaluations")"
[[ "$unauth" == 401 ]] || fail "an evaluation without a key answered $unauth, expected 401"
ok "without a key: 401"
status="$(curl -s -o "$work/evaluation.json" -w '%{http_code}' -H 'Content-Type: application/json' -H "X-Api-Key: $api_key" \
    --data-binary "$request" "$base/v1/evaluations")"
[[ "$status" == 200 ]] || { cat "$work/evaluation.json" >&2; echo >&2; fail "the evaluation answered $status, expected 200"; }
evaluation_id="$(grep -oE '"(evaluationId|id)" *: *"[0-9a-fA-F-]{36}"' "$work/evaluation.json" | head -n 1 | grep -oE '[0-9a-fA-F-]{36}')" \
    || fail "the answer names no evaluation id"
rule_digest="$(grep -oE '"ruleSet" *: *\{ *"digest" *: *"[0-9a-f]{64}"' "$work/evaluation.json" | head -n 1 | grep -oE '[0-9a-f]{64}')" \
    || fail "the answer names no ruleSet.digest"
verdict="$(grep -oE '"verdict" *: *"[^"]+"' "$work/evaluation.json" | head -n 1 | cut -d'"' -f4)" || true
ok "200: evaluation $evaluation_id, verdict ${verdict:-?}, ruleDigest $rule_digest"

verify_status="$(curl -s -o "$work/verify.json" -w '%{http_code}' -H "X-Api-Key: $api_key" "$base/v1/evaluations/$evaluation_id/verify")"
[[ "$verify_status" == 200 ]] || { cat "$work/verify.json" >&2; echo >&2; fail "verify answered $verify_status, expected 200"; }
ok "GET /v1/evaluations/$evaluation_id/verify: $(cat "$work/verify.json")"
list_status="$(curl -s -o "$work/list.json" -w '%{http_code}' -H "X-Api-Key: $api_key" "$base/v1/evaluations?asset=C-204B&limit=5")"
[[ "$list_status" == 200 ]] || { cat "$work/list.json" >&2; echo >&2; fail "the history query answered $list_status, expected 200"; }
grep -q "\"$evaluation_id\"" "$work/list.json" || fail "the history of C-204B does not list evaluation $evaluation_id"
grep -q "\"ruleDigest\" *: *\"$rule_digest\"" "$work/list.json" || fail "the history record does not name ruleDigest $rule_digest"
ok "GET /v1/evaluations?asset=C-204B lists it with ruleDigest $rule_digest"

# ---------------------------------------------------------------------------------------------------------------
step "files: audit and logs under the data folder only"
[[ -s "$data/audit.db" ]] || fail "no audit file at $data/audit.db"
ok "audit file: $data/audit.db ($(stat -c %s "$data/audit.db") bytes, owner UID $(stat -c %u "$data/audit.db"))"
if command -v sqlite3 >/dev/null; then
    records="$(sqlite3 -readonly "file:$data/audit.db?mode=ro" "SELECT count(*) FROM evaluations;" 2>/dev/null || echo '?')"
    ok "evaluations table holds $records record(s)"
fi
for _ in $(seq 1 20); do compgen -G "$data/logs/*.log" >/dev/null && break; sleep 0.25; done
compgen -G "$data/logs/*.log" >/dev/null || fail "no log file under $data/logs"
ok "log file: $(cd "$data/logs" && ls -- *.log | head -n 1)"
written="$(find "$app/" "$rules" "$home" -newer "$work/started" ! -type d -print 2>/dev/null | head -n 5)"
[[ -z "$written" ]] || fail "files were written outside the data folder: $written"
ok "nothing new in the app, rules or home folders"

# ---------------------------------------------------------------------------------------------------------------
step "stop: SIGTERM"
kill -TERM "$server_pid"
stop_rc=0
wait "$server_pid" || stop_rc=$?
server_pid=""
[[ $stop_rc -eq 0 ]] || { tail -n 20 "$work/service.out" >&2; fail "the service exited $stop_rc after SIGTERM, expected 0"; }
ok "stopped, exit 0"
if grep -q -E '"@l":"(Error|Fatal)"' "$work/service.out"; then
    grep -E '"@l":"(Error|Fatal)"' "$work/service.out" | head -n 5 >&2
    fail "the service logged errors"
fi
ok "no Error or Fatal events in the service's output"
if grep -q -E '"@l":"Warning"' "$work/service.out"; then
    echo "   warnings logged (not a failure):"; grep -E '"@l":"Warning"' "$work/service.out" | head -n 5 | cut -c1-300
fi

# ---------------------------------------------------------------------------------------------------------------
step "guard: DischargeGuard__Replicas=2 with the SQLite store refuses to start"
guard_data="$work/data-guard"
mkdir -p "$guard_data"
[[ $(id -u) -eq 0 ]] && chown "$run_uid:$run_gid" "$guard_data"
declare -a guard_env=()
for pair in "${service_env[@]}"; do
    case "$pair" in
        DischargeGuard__Replicas=*) guard_env+=("DischargeGuard__Replicas=2") ;;
        Audit__SqlitePath=*) guard_env+=("Audit__SqlitePath=$guard_data/audit.db") ;;
        *) guard_env+=("$pair") ;;
    esac
done
guard_rc=0
env -i "${guard_env[@]}" "${as_user[@]}" timeout 60 dotnet "$app/DischargeGuard.Api.dll" >"$work/guard.out" 2>&1 || guard_rc=$?
[[ $guard_rc -ne 0 && $guard_rc -ne 124 ]] || fail "with Replicas=2 on SQLite the service exited $guard_rc (124: still running after 60 s), expected a refusal"
grep -q 'several replicas cannot share a SQLite audit file' "$work/guard.out" || { tail -n 5 "$work/guard.out" >&2; fail "the refusal does not say why"; }
ok "refused with exit $guard_rc: several replicas cannot share a SQLite audit file"

printf '\nverify-container: PASS (UID %s, rules read-only, audit %s, ruleDigest %s)\n' "$run_uid" "$data/audit.db" "$rule_digest"
