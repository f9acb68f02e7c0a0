#!/usr/bin/env bash
# Drop a test database made by ensure_postgres.sh (used by `make test` after the PostgreSQL run).
set -euo pipefail
DB="${1:?database name}"
case "$DB" in *test*) ;; *) echo "refusing to drop $DB: not a test database" >&2; exit 1 ;; esac
psql -h 127.0.0.1 -U postgres -qc "drop database if exists \"$DB\" with (force)" >&2
