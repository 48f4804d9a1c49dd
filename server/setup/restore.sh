#!/usr/bin/env bash
# `npm run restore -- FILE [--yes] [--backup-dir DIR]`: replaces the local database's data
# (SALLYPORT_DB_NAME, default sallyport; or DATABASE_URL) with a backup made by `npm run backup`.
# Stop the server first: the restore refuses while anything else is connected to the database.
# It backs up the current data first, restores in one transaction (all or nothing), signs everyone
# out, migrates the restored schema forward and verifies the audit log. docs/decisions/020.
source "$(dirname "${BASH_SOURCE[0]}")/lib.sh"
usage="usage: npm run restore -- FILE [--yes] [--backup-dir DIR]"
file="" yes=0 backup_dir="$DATA_DIR/backups"
while [ $# -gt 0 ]; do
  case "$1" in
    --yes) yes=1 ;;
    --backup-dir) [ $# -ge 2 ] || fail "--backup-dir needs a folder" "$usage"; backup_dir="$2"; shift ;;
    -h|--help) echo "$usage"; exit 0 ;;
    -*) fail "unknown option $1" "$usage" ;;
    *) [ -z "$file" ] || fail "one backup file only" "$usage"; file="$1" ;;
  esac
  shift
done
[ -n "$file" ] || fail "which backup? Name the file" "$usage (backups are in $DATA_DIR/backups unless you chose another folder)"
[ -f "$file" ] && [ -r "$file" ] || fail "cannot read $file" "check the path"

step "Restore"
ensure_postgres_cluster
ensure_database "${SALLYPORT_DB_NAME:-sallyport}"
url=$(backup_database_url)
bin=$(pg_client_bin)
name=$(node -e 'console.log(decodeURIComponent(new URL(process.argv[1]).pathname.slice(1)))' "$url")
psql_on() { with_database_url "$url" "$bin/psql" -X -q -v ON_ERROR_STOP=1 "$@"; }

listing=$("$bin/pg_restore" --list "$file" 2>/dev/null) || fail "$file is not a backup made by \`npm run backup\` (pg_dump's custom format)" "name a .dump file from the backups folder"
made=$(printf '%s\n' "$listing" | sed -n 's/^; Archive created at //p' | head -n 1)
from=$(printf '%s\n' "$listing" | sed -n 's/^;[[:space:]]*dbname: //p' | head -n 1)
grep -q 'TABLE DATA public audit_events' <<<"$listing" || fail "$file holds no Sallyport data (no audit_events table)" "name a backup of a Sallyport database"

# A client that has just disconnected (a server stopped a moment ago) can stay listed until its
# backend process has exited: look again for up to two seconds before refusing.
for attempt in 1 2 3 4 5 6 7 8 9 10; do
  others=$(psql_on -tA -c "SELECT count(*) FROM pg_stat_activity WHERE datname = current_database() AND pid <> pg_backend_pid()")
  [ "$others" = "0" ] && break
  sleep 0.2
done
[ "$others" = "0" ] || fail "$others other connection(s) to database $name are open: is the server (\`npm start\`) running?" \
  "stop the server (Ctrl-C where \`npm start\` runs) and anything else using the database, then run the restore again"

if [ "$yes" != "1" ]; then
  [ -t 0 ] || fail "nothing restored: confirmation needs a terminal" "run it in a terminal, or add --yes"
  printf '\n  This REPLACES ALL DATA in database %s — organisations, users, devices, proposals,\n' "$name"
  printf '  sessions and the audit log — with the backup\n    %s\n  of database %s made at %s.\n' "$file" "${from:-?}" "${made:-an unknown time}"
  printf '  The current data is backed up to %s first. Everyone will have to sign in again.\n\n' "$backup_dir"
  read -r -p "  Type the database name ($name) to restore: " answer
  [ "$answer" = "$name" ] || fail "nothing restored: the name did not match" "run it again and type $name"
fi

before=$(dump_database "$url" "$backup_dir" before-restore)
ok "current data backed up to $before"

# One transaction: an error anywhere (psql stops at the first) rolls everything back, and no
# COMMIT is sent when pg_restore itself fails. Triggers come after the data in the dump, so the
# restored audit entries keep their chain as it was. Owners and grants are this database's
# (the owner role restores; the migration step below grants the runtime role its share).
{
  echo "BEGIN;"
  echo "SET client_min_messages = warning;"
  # Every schema the owner role holds (public, and any a library keeps its tables in), not only
  # public: the dump recreates each, and a leftover would collide with it.
  cat <<'SQL'
DO $$
DECLARE item record;
BEGIN
  FOR item IN SELECT nspname FROM pg_namespace
    WHERE (nspname = 'public' OR pg_get_userbyid(nspowner) = current_user)
      AND nspname NOT LIKE 'pg\_%' AND nspname <> 'information_schema' LOOP
    EXECUTE format('DROP SCHEMA %I CASCADE', item.nspname);
  END LOOP;
END $$;
CREATE SCHEMA public;
SQL
  "$bin/pg_restore" --no-owner --no-acl --file=- "$file" || exit 1
  # Sessions in the backup may since have been signed out: nobody is signed in after a restore.
  echo "DELETE FROM public.sessions;"
  echo "COMMIT;"
} | psql_on >/dev/null || fail "the restore failed; nothing was changed" "read the error above; the data is as it was (and in $before)"
ok "restored $file into database $name"

cd "$ROOT"
npx tsx server/db/cli.ts migrate || fail "the restored database could not be migrated to this version" "read the error above; $before holds the data from before the restore"
if report=$(npx tsx server/db/audit-verify.ts 2>&1); then
  ok "$(tail -n 1 <<<"$report")"
else
  printf '%s\n' "$report" >&2
  printf '\n\033[33m! The restored audit log does not verify (above): the backup may have been altered.\033[0m\n' >&2
fi
ok "done: start the server again (npm start); everyone signs in again"
