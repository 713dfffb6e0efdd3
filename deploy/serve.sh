#!/usr/bin/env bash
# Provision PostgreSQL, build, migrate, load the invented demo scenario, then run the service
# on http://127.0.0.1:5080 in the foreground. Safe to run again: every step is idempotent.
set -euo pipefail
cd "$(dirname "$0")/.."
deploy/provision.sh

export DOTNET_CLI_TELEMETRY_OPTOUT=1 DOTNET_NOLOGO=1
export TRIAGE_CONNECTION="${TRIAGE_CONNECTION:-Host=127.0.0.1;Port=5432;Username=triage;Password=triage;Database=triage}"
url="${TRIAGE_URL:-http://127.0.0.1:5080}"

echo "serve: building (Release)"
dotnet build src/Triage.Api/Triage.Api.csproj -c Release -v quiet -nologo >/dev/null
dotnet build src/Triage.Cli/Triage.Cli.csproj -c Release -v quiet -nologo >/dev/null
triage() { dotnet src/Triage.Cli/bin/Release/net10.0/linux-x64/triage.dll "$@"; }

triage db advance
demo_night="${TRIAGE_DEMO_NIGHT:-2026-12-02}"
triage demo load --roster demo/roster.json --keys-file var/demo-keys.json \
  --calibration demo/calibration.json --candidates demo/candidates.json --plan-night "$demo_night"

cat <<INFO

Triage is starting on $url
  Night view         : $url/?night=$demo_night  (sign in with a key from the demo keys file;
                       the demo plan is computed in the first minute after start)
  API reference page : $url/reference.html
  OpenAPI document   : $url/openapi/v1.json
  Health             : $url/health/ready
  Demo keys          : $(pwd)/var/demo-keys.json  (send as 'Authorization: Bearer <key>')
Plans are advisory: the observatory's own interlocks and operators decide what is observed.
Stop with Ctrl+C.

INFO
cd src/Triage.Api
exec dotnet bin/Release/net10.0/linux-x64/Triage.Api.dll --urls "$url" --contentRoot "$(pwd)"
