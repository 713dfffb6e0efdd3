#!/usr/bin/env bash
# Provision PostgreSQL (and Chromium for the browser tests), then run every test in the
# solution and finish with one line: "N passed, N failed, N skipped", keeping the exit code.
set -uo pipefail
cd "$(dirname "$0")/.."
TRIAGE_EXTRA_PACKAGES="chromium fonts-dejavu-core ${TRIAGE_EXTRA_PACKAGES:-}" deploy/provision.sh || exit 1

# The test database starts empty on every run (its schema comes from the migrations under test).
if [ -z "${TRIAGE_TEST_CONNECTION:-}" ]; then
  pg() { if [ "$(id -u)" = 0 ]; then (cd /tmp && runuser -u postgres -- "$@"); else (cd /tmp && sudo -u postgres "$@"); fi; }
  pg dropdb --if-exists --force triage_test
  pg createdb -O triage triage_test
  # Databases left behind by an interrupted run of the isolated-database tests.
  for db in $(pg psql -tAq -d postgres -c "SELECT datname FROM pg_database WHERE datname LIKE 'triage_iso_%'"); do
    pg dropdb --if-exists --force "$db"
  done
fi
export TRIAGE_TEST_CONNECTION="${TRIAGE_TEST_CONNECTION:-Host=127.0.0.1;Port=5432;Username=triage;Password=triage;Database=triage_test}"
export DOTNET_CLI_TELEMETRY_OPTOUT=1 DOTNET_NOLOGO=1
log=$(mktemp)
dotnet test Triage.sln --nologo "$@" 2>&1 | tee "$log"
code=${PIPESTATUS[0]}
# Sum the per-assembly result lines ("Passed!  - Failed: 0, Passed: 12, Skipped: 0, ...").
awk '
  /(Passed|Failed)! +- +Failed: / {
    gsub(/,/, " ")
    for (i = 1; i <= NF; i++) {
      if ($i == "Failed:")  f += $(i + 1)
      if ($i == "Passed:")  p += $(i + 1)
      if ($i == "Skipped:") s += $(i + 1)
    }
    seen = 1
  }
  END { printf "%d passed, %d failed, %d skipped\n", p, f, s; if (!seen) exit 3 }
' "$log" || { [ "$code" = 0 ] && code=1; }
rm -f "$log"
exit "$code"
