#!/usr/bin/env bash
# `npm run backup [-- DIR]`: a pg_dump (custom format, timestamped) of the local database
# (SALLYPORT_DB_NAME, default sallyport; or DATABASE_URL) into DIR, default .data/backups.
# The server may keep running: pg_dump reads one consistent snapshot. docs/decisions/020.
source "$(dirname "${BASH_SOURCE[0]}")/lib.sh"
case "${1:-}" in -h|--help) echo "usage: npm run backup [-- DIR]   (default: $DATA_DIR/backups)"; exit 0 ;; -*) fail "unknown option $1" "usage: npm run backup [-- DIR]" ;; esac
dir="${1:-$DATA_DIR/backups}"
step "Backup"
ensure_postgres_cluster
ensure_database "${SALLYPORT_DB_NAME:-sallyport}"
file=$(dump_database "$(backup_database_url)" "$dir")
ok "wrote $file ($(du -h "$file" | cut -f1))"
ok "Copy it off this machine, and try a restore now and then (README, \"Backup and restore\")."
ok "Not in it: the files in $DATA_DIR (session-secret, postgres-password, postgres-owner-password, outbox-secret)."
