#!/usr/bin/env bash
# A newcomer's first hour, scripted: the README's run command, every CLI verb's --help, a usage
# error and one real run of each, and every shell example of docs/api.md against the running
# service. Prints one line per check and ends with "first hour: N passed, N failed"; the exit
# code is 0 only when nothing failed.
#
#   deploy/first-hour.sh               # everything
#   deploy/first-hour.sh --short       # CI form: no sample runs of the two slow verbs (calibrate,
#                                      # plan); every verb's --help and usage error still checked
#   deploy/first-hour.sh --with-tests  # also runs the README's test command (the whole suite)
#
# It works as root and as a user with sudo (provisioning asks for root only where needed). It
# uses its own database (TRIAGE_FIRST_HOUR_DB, default triage_first_hour; dropped and created
# empty) and port (TRIAGE_FIRST_HOUR_PORT, default 5080), and stops the service it started.
# CLI verbs are discovered from `triage --help`, so a new verb is checked as soon as it lands; a
# verb without a sample run below fails with a message saying where to add one.
set -uo pipefail
cd "$(dirname "$0")/.."
root=$(pwd)

short=0 with_tests=0
for arg in "$@"; do
  case "$arg" in
    --short) short=1 ;;
    --with-tests) with_tests=1 ;;
    -h|--help) sed -n '2,19p' "$0"; exit 0 ;;
    *) echo "first-hour: unknown argument '$arg' (see --help)" >&2; exit 2 ;;
  esac
done

db="${TRIAGE_FIRST_HOUR_DB:-triage_first_hour}"
port="${TRIAGE_FIRST_HOUR_PORT:-5080}"
export TRIAGE_URL="http://127.0.0.1:$port"
export TRIAGE_CONNECTION="Host=127.0.0.1;Port=5432;Username=triage;Password=triage;Database=$db"
export DOTNET_CLI_TELEMETRY_OPTOUT=1 DOTNET_NOLOGO=1
work=$(mktemp -d)
log="$work/first-hour.log"
passed=0 failed=0 service_pid=""

ok() { passed=$((passed + 1)); echo "  ok    $*"; }
bad() { failed=$((failed + 1)); echo "  FAIL  $*"; }
finish() {
  if [ -n "$service_pid" ] && kill -0 "$service_pid" 2>/dev/null; then
    kill "$service_pid" 2>/dev/null
    wait "$service_pid" 2>/dev/null
  fi
  echo "first hour: $passed passed, $failed failed (details in $log)"
}
trap finish EXIT

# ---------------------------------------------------------------- 1. README: run the service
echo "== README: deploy/serve.sh (database $db, $TRIAGE_URL)"
PGPASSWORD=triage psql -h 127.0.0.1 -U triage -d postgres -qc "DROP DATABASE IF EXISTS $db WITH (FORCE)" >>"$log" 2>&1
PGPASSWORD=triage psql -h 127.0.0.1 -U triage -d postgres -qc "CREATE DATABASE $db" >>"$log" 2>&1 \
  || echo "  (could not create $db as role triage; provisioning will try)"
started=$(date +%s)
deploy/serve.sh >"$work/serve.log" 2>&1 &
service_pid=$!
ready=0
for _ in $(seq 1 900); do
  if curl -sf "$TRIAGE_URL/health/ready" >/dev/null 2>&1; then ready=1; break; fi
  kill -0 "$service_pid" 2>/dev/null || break
  sleep 1
done
if [ "$ready" = 1 ]; then
  ok "service ready after $(( $(date +%s) - started )) s"
else
  bad "service did not become ready (tail of serve.log:)"; tail -20 "$work/serve.log"; exit 1
fi
night=$(grep -o 'night=[0-9-]*' "$work/serve.log" | head -1 | cut -d= -f2)
night=${night:-2026-12-02}
keys="$root/var/demo-keys.json"
key_of() { grep "\"$1\"" "$keys" | head -1 | cut -d'"' -f4; }
admin=$(key_of admin)
planned=0
for _ in $(seq 1 240); do
  code=$(curl -s -o /dev/null -w '%{http_code}' -H "Authorization: Bearer $admin" "$TRIAGE_URL/api/plans/$night")
  if [ "$code" = 200 ]; then planned=1; break; fi
  sleep 1
done
[ "$planned" = 1 ] && ok "demo plan for $night served after $(( $(date +%s) - started )) s" || bad "no demo plan for $night within 4 minutes"
for page in "/" "/reference.html" "/openapi/v1.json"; do
  code=$(curl -s -o /dev/null -w '%{http_code}' "$TRIAGE_URL$page")
  [ "$code" = 200 ] && ok "GET $page" || bad "GET $page answered $code"
done

# ---------------------------------------------------------------- 2. CLI: every verb
echo "== CLI: every verb's --help, a usage error and one run"
cli="$root/src/Triage.Cli/bin/Release/net10.0/linux-x64/triage.dll"
triage() { dotnet "$cli" "$@"; }
lib="$work/lib"
declare -A sample=(
  ["db advance"]=""
  ["key issue"]="--name first-hour --scope scheduler"
  ["demo load"]="--keys-file $work/demo-keys.json --roster demo/roster.json"
  ["invent-candidates"]="--out $work/invented.json --count 30"
  ["fit"]="--candidates $work/invented.json --at 2026-12-03T00:00:00Z --out $work/fit.json"
  ["plan"]="--roster demo/roster.json --candidates $work/invented.json --calibration demo/calibration.json --night 2026-12-02 --time-limit 3 --out $work/plan.json"
  ["sky"]="--latitude -30.5 --longitude -70.8 --elevation 2400 --date 2026-01-15 --target 75,-30"
  ["exptime"]="--instrument demo/instrument-lowres.json --mag 19.5 --snr 20"
  ["library synth"]="--out $lib --objects 20"
  ["library check"]="$lib"
  ["library export"]="--library $lib --out $work/lib-fits --format fits"
  ["degrade"]="--in @first-spectrum --resolution 100 --snr 20 --out $work/degraded.txt"
  ["calibrate"]="--library $lib --out $work/cal.json --resolutions 10,100 --snr 10 --folds 2 --plots $work/plots"
  ["plot-calibration"]="--in demo/calibration.json --out $work/demo-plots"
  ["rehearse"]="--roster demo/roster.json --candidates $work/invented.json --calibration demo/calibration.json --night 2026-12-02 --every 120 --out $work/rehearsal.json"
  ["simulate"]="--roster demo/roster.json --nights 2 --seed 1 --out $work/season.json"
)
# Runs that need another verb's output first.
order=("db advance" "key issue" "demo load" "invent-candidates" "fit" "plan" "rehearse" "sky" "exptime" "library synth" "library check" "library export" "degrade" "calibrate" "plot-calibration")

commands_of() { # the subcommands listed under "Commands:" in a help text
  awk '/^Commands:/ {on = 1; next} on && /^[^ ]/ {on = 0} on && NF {print $1}'
}
leaves=()
discover() { # depth-first: a command with subcommands is a group, otherwise a leaf verb
  local path="$1" subs
  # shellcheck disable=SC2086
  subs=$(triage $path --help 2>/dev/null | commands_of)
  if [ -z "$subs" ]; then leaves+=("$path"); return; fi
  for s in $subs; do discover "${path:+$path }$s"; done
}
discover ""
ok "discovered ${#leaves[@]} verbs: $(IFS=,; echo "${leaves[*]}")"

for verb in "${leaves[@]}"; do
  # shellcheck disable=SC2086
  if triage $verb --help >"$work/help.txt" 2>&1 && grep -q '^Usage:' "$work/help.txt"; then ok "$verb --help"; else bad "$verb --help"; fi
  # shellcheck disable=SC2086
  triage $verb --no-such-option >"$work/out.txt" 2>"$work/err.txt"; code=$?
  if [ "$code" = 2 ] && grep -q -- '--no-such-option' "$work/err.txt" && ! grep -q '^Description:' "$work/err.txt" "$work/out.txt"; then
    ok "$verb: usage error exits 2, names the option, no help dump"
  else
    bad "$verb: usage error exited $code (stderr: $(head -c 200 "$work/err.txt"))"
  fi
done
declare -A done_runs=()
for verb in "${order[@]}" "${leaves[@]}"; do
  [ -n "${done_runs[$verb]:-}" ] && continue
  done_runs[$verb]=1
  if [ "$short" = 1 ] && [[ "$verb" == calibrate || "$verb" == plan ]]; then echo "  skip  $verb (short form)"; continue; fi
  printf '%s\n' "${leaves[@]}" | grep -qx "$verb" || { bad "sample run for '$verb', which the CLI no longer has"; continue; }
  if [ -z "${sample[$verb]+set}" ]; then
    bad "$verb: no sample run; add one to the 'sample' table in deploy/first-hour.sh"; continue
  fi
  args=${sample[$verb]}
  if [[ "$args" == *@first-spectrum* ]]; then
    first=$(find "$lib/spectra" -type f | sort | head -1)
    args=${args//@first-spectrum/$first}
  fi
  begin=$(date +%s)
  # shellcheck disable=SC2086
  if triage $verb $args >"$work/run.txt" 2>&1; then
    ok "$verb $args ($(( $(date +%s) - begin )) s)"
  else
    bad "$verb $args (exit $?): $(tail -c 300 "$work/run.txt")"
  fi
  cat "$work/run.txt" >>"$log"
done
if grep -q 'Z"' "$work/fit.json" 2>/dev/null && ! grep -qE '"[0-9-]+T[0-9:.]+\+00:00"' "$work/fit.json"; then
  ok "fit prints times as ...Z to the second"
else
  bad "fit output has times not in ...Z form"
fi

# ---------------------------------------------------------------- 3. docs/api.md examples
echo "== docs/api.md: every shell example against $TRIAGE_URL"
# Each ```sh block runs in one shell session (variables carry over, as when pasting them in
# order). Every curl is timed and its status checked: 2xx expected, 4xx where the comment
# above it says the request is bad; a 5xx, a refused connection or a 401 (an undefined key
# variable) always fails.
statuses="$work/curl-status.txt"
: >"$statuses"
script="$work/api-examples.sh"
{
  echo 'curl() { local out rc; out=$(command curl -w "\n@@%{http_code}" "$@"); rc=$?'
  echo '  printf "%s\n" "${out%$'"'"'\n'"'"'@@*}"; echo "${out##*@@} ${__expect:-2xx} ${__line:-?}" >>'"'$statuses'"'; return $rc; }'
  awk -v url="$TRIAGE_URL" '
    /^```sh/ {on = 1; block++; print "__expect=2xx"; next}
    /^```/ && on {on = 0; next}
    on {
      gsub("http://127.0.0.1:5080", url)
      if ($0 ~ /^# /) {
        expect = tolower($0) ~ /bad request|refused|names the field|is refused|error/ ? "4xx" : "2xx"
        printf "__expect=%s\n", expect
      }
      if ($0 ~ /curl /) printf "__line=%d\n", NR
      print
    }' docs/api.md
} >"$script"
(cd "$root" && API="$TRIAGE_URL" bash "$script") >>"$log" 2>&1
n=0
while read -r code expect line; do
  n=$((n + 1))
  case "$code:$expect" in
    2??:2xx|3??:2xx|4??:4xx) ok "docs/api.md line $line: HTTP $code" ;;
    *) bad "docs/api.md line $line: HTTP $code, expected $expect" ;;
  esac
done <"$statuses"
[ "$n" -gt 0 ] || bad "no curl example of docs/api.md ran"

# ---------------------------------------------------------------- 4. README: the tests
if [ "$with_tests" = 1 ]; then
  echo "== README: deploy/test.sh"
  if deploy/test.sh >"$work/test.log" 2>&1; then ok "deploy/test.sh: $(tail -1 "$work/test.log")"; else bad "deploy/test.sh: $(tail -1 "$work/test.log")"; fi
fi
[ "$short" = 1 ] && echo "(short form)"
[ "$failed" = 0 ]
