# Sourced by scripts/test.sh: start a throwaway PostgreSQL cluster on loopback and export
# TRIALS_TEST_PG_URL; defines pg_stop. initdb refuses to run as root, so as root the
# cluster runs as the postgres user.
pg_bin=$(ls -d /usr/lib/postgresql/*/bin 2>/dev/null | sort -V | tail -n 1)
[ -n "$pg_bin" ] || return 1
pg_dir=$(mktemp -d /tmp/trials-pg.XXXXXX)
pg_port=${TRIALS_PG_PORT:-55432}
while (echo >/dev/tcp/127.0.0.1/$pg_port) 2>/dev/null; do pg_port=$((pg_port + 1)); done
as_pg=()
if [ "$(id -u)" = 0 ]; then
  chown postgres "$pg_dir"
  as_pg=(runuser -u postgres --)
fi
"${as_pg[@]}" "$pg_bin/initdb" -D "$pg_dir/data" -U trials --auth=trust -E UTF8 >/dev/null || return 1
"${as_pg[@]}" "$pg_bin/pg_ctl" -D "$pg_dir/data" -l "$pg_dir/log" -w \
  -o "-p $pg_port -k $pg_dir -c listen_addresses=127.0.0.1 -c fsync=off" start >/dev/null || return 1
"$pg_bin/createdb" -h 127.0.0.1 -p "$pg_port" -U trials trials_test || return 1
export TRIALS_TEST_PG_URL="postgresql+psycopg://trials@127.0.0.1:$pg_port/trials_test"
echo "PostgreSQL throwaway cluster on 127.0.0.1:$pg_port"
pg_stop() {
  "${as_pg[@]}" "$pg_bin/pg_ctl" -D "$pg_dir/data" -m immediate stop >/dev/null 2>&1 || true
  rm -rf "$pg_dir"
}
return 0
