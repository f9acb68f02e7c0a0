#!/usr/bin/env bash
# Make sure a PostgreSQL server answers on 127.0.0.1:5432 and that the test database exists.
# Used by `make test` (and so by CI). Prints the database URL on stdout.
set -euo pipefail
DB="${1:-jtcheck_test}"
HOST=127.0.0.1
if ! pg_isready -q -h "$HOST" -p 5432 2>/dev/null; then
  echo "PostgreSQL not answering on $HOST:5432; starting it" >&2
  if command -v pg_ctlcluster >/dev/null 2>&1 && [ -d /etc/postgresql ]; then
    pg_ctlcluster --skip-systemctl-redirect "$(ls /etc/postgresql | head -n1)" main start >&2 || true
  fi
  for _ in $(seq 1 30); do pg_isready -q -h "$HOST" -p 5432 && break; sleep 1; done
fi
pg_isready -q -h "$HOST" -p 5432 || { echo "PostgreSQL is not available on $HOST:5432" >&2; exit 1; }
if ! psql -h "$HOST" -U postgres -tAc "select 1 from pg_database where datname='$DB'" | grep -q 1; then
  psql -h "$HOST" -U postgres -qc "create database $DB" >&2
fi
echo "postgresql://postgres@$HOST:5432/$DB"
