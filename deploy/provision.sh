#!/usr/bin/env bash
# Provision what Triage needs on a Debian 12 machine: PostgreSQL from Debian's packages,
# a running cluster, and a role plus databases for the service and its tests.
# Safe to run again: every step checks before it acts.
set -euo pipefail

# Only the steps that need root go through as_root: run directly as root, through sudo otherwise.
if [ "$(id -u)" != 0 ] && ! command -v sudo >/dev/null 2>&1; then
  echo "provision: installing and configuring PostgreSQL needs root: run this as root, or install sudo and run it as a user allowed to use it." >&2
  exit 1
fi
as_root() { if [ "$(id -u)" = 0 ]; then "$@"; else sudo "$@"; fi; }
as_postgres() { (cd /tmp && as_root runuser -u postgres -- "$@"); }

: "${TRIAGE_DB_USER:=triage}"
: "${TRIAGE_DB_PASSWORD:=triage}"
: "${TRIAGE_DB_NAME:=triage}"
: "${TRIAGE_TEST_DB_NAME:=triage_test}"
apt_updated=0
need_pkg() {
  local pkg="$1"
  if ! dpkg-query -W -f='${Status}' "$pkg" 2>/dev/null | grep -q 'install ok installed'; then
    if [ "$apt_updated" = 0 ]; then as_root apt-get update -qq; apt_updated=1; fi
    echo "provision: installing $pkg from Debian's packages"
    as_root env DEBIAN_FRONTEND=noninteractive apt-get install -y -qq "$pkg" >/dev/null
  fi
}

need_pkg postgresql
for pkg in ${TRIAGE_EXTRA_PACKAGES:-}; do need_pkg "$pkg"; done

# Start the first cluster Debian created (15 on Debian 12).
cluster=$(pg_lsclusters --no-header | awk 'NR==1 {print $1" "$2}')
if [ -z "$cluster" ]; then
  ver=$(ls /usr/lib/postgresql | sort -V | tail -n1)
  as_root pg_createcluster "$ver" main >/dev/null
  cluster="$ver main"
fi
if ! pg_lsclusters --no-header | awk 'NR==1 {print $4}' | grep -q online; then
  as_root pg_ctlcluster $cluster start
fi
for _ in $(seq 1 30); do
  as_postgres pg_isready -q -h 127.0.0.1 && break
  sleep 1
done

# PostgreSQL ships with 128 MB of shared buffers, sized for a small shared machine. Batch
# intake writes ~55,000 rows per 5,000 candidates; with 2 GB (on a machine of 8 GiB or more)
# the measured batch time dropped from 250-290 ms to 243-250 ms with less spread
# (docs/candidates.md). Only a server still on the default is changed; set
# TRIAGE_PG_SHARED_BUFFERS=keep to leave it alone.
mem_kib=$(awk '/^MemTotal:/ {print $2}' /proc/meminfo)
if [ "${TRIAGE_PG_SHARED_BUFFERS:-2GB}" != keep ] && [ "${mem_kib:-0}" -ge 8000000 ] \
   && [ "$(as_postgres psql -tAq -d postgres -c 'SHOW shared_buffers')" = 128MB ]; then
  as_postgres psql -q -d postgres -c "ALTER SYSTEM SET shared_buffers = '${TRIAGE_PG_SHARED_BUFFERS:-2GB}'"
  as_root pg_ctlcluster $cluster restart
  for _ in $(seq 1 30); do
    as_postgres pg_isready -q -h 127.0.0.1 && break
    sleep 1
  done
  echo "provision: PostgreSQL shared_buffers set to ${TRIAGE_PG_SHARED_BUFFERS:-2GB}"
fi

as_postgres psql -v ON_ERROR_STOP=1 -q -d postgres <<SQL
DO \$\$
BEGIN
  IF NOT EXISTS (SELECT 1 FROM pg_roles WHERE rolname = '${TRIAGE_DB_USER}') THEN
    CREATE ROLE ${TRIAGE_DB_USER} LOGIN PASSWORD '${TRIAGE_DB_PASSWORD}' CREATEDB;
  END IF;
END
\$\$;
SQL
for db in "$TRIAGE_DB_NAME" "$TRIAGE_TEST_DB_NAME"; do
  if ! as_postgres psql -tAq -d postgres -c "SELECT 1 FROM pg_database WHERE datname = '$db'" | grep -q 1; then
    as_postgres createdb -O "$TRIAGE_DB_USER" "$db"
  fi
done
echo "provision: PostgreSQL ready on 127.0.0.1:5432 (role $TRIAGE_DB_USER, databases $TRIAGE_DB_NAME, $TRIAGE_TEST_DB_NAME)"
