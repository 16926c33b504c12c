# Shared bootstrap for scripts/start.sh and scripts/test.sh. Source it; do not run it.
# Everything here must work for root (CI, containers) and for a normal user on their own machine.

say() { printf '\033[1m[panelproof]\033[0m %s\n' "$*"; }
die() { printf '\033[1;31m[panelproof]\033[0m %s\n' "$*" >&2; exit 1; }
is_root() { [ "$(id -u)" = "0" ]; }

APT_UPDATED=""
apt_install() {
  if [ -z "$APT_UPDATED" ]; then
    say "apt-get update"
    apt-get update -qq -o DPkg::Lock::Timeout=600 >/dev/null
    APT_UPDATED=1
  fi
  say "installing Debian packages: $*"
  DEBIAN_FRONTEND=noninteractive apt-get install -y -qq -o DPkg::Lock::Timeout=600 "$@" >/dev/null
}

ensure_node() {
  command -v node >/dev/null || die "Node.js is not installed. Install Node.js 20.19 or newer (https://nodejs.org or your package manager)."
  local v; v=$(node -p 'process.versions.node')
  node -e 'const [a,b]=process.versions.node.split(".").map(Number); process.exit(a>20||(a===20&&b>=19)?0:1)' \
    || die "Node.js $v is too old: Panelproof needs 20.19 or newer."
}

# Installs npm dependencies when they are missing or older than package-lock.json.
ensure_deps() {
  if [ ! -d node_modules ] || [ ! -f node_modules/.package-lock.json ] || [ package-lock.json -nt node_modules/.package-lock.json ]; then
    say "installing npm dependencies (npm ci)"
    npm ci --no-audit --no-fund --loglevel=error
  fi
}

PG_BIN=""
# Finds PostgreSQL's server programs; installs Debian's postgresql when root and missing.
ensure_postgres() {
  find_pg_bin() {
    if command -v pg_ctl >/dev/null && command -v initdb >/dev/null; then PG_BIN=$(dirname "$(command -v pg_ctl)"); return 0; fi
    local d
    for d in $(ls -d /usr/lib/postgresql/*/bin 2>/dev/null | sort -V -r); do
      if [ -x "$d/pg_ctl" ] && [ -x "$d/initdb" ]; then PG_BIN=$d; return 0; fi
    done
    return 1
  }
  find_pg_bin && return 0
  if is_root && command -v apt-get >/dev/null; then
    apt_install postgresql
    find_pg_bin && return 0
  fi
  die "PostgreSQL's server programs (initdb, pg_ctl) are missing. Install them, e.g. 'sudo apt-get install postgresql', or set DATABASE_URL to a server you already run."
}

# Runs a PostgreSQL program as the postgres user when we are root (initdb refuses root), else as ourselves.
pg_as_owner() {
  if is_root; then
    local cmd; cmd=$(printf '%q ' "$@")
    su postgres -s /bin/bash -c "$cmd"
  else
    "$@"
  fi
}

# Picks the cluster folder: DIR inside the checkout, unless root's postgres user cannot reach it.
cluster_dir_for() {
  local wanted=$1
  mkdir -p "$wanted"
  if is_root && ! su postgres -s /bin/bash -c "test -x $(printf '%q' "$(cd "$wanted/.." && pwd)")" 2>/dev/null; then
    local alt="/var/tmp/panelproof-$(printf '%s' "$(cd "$wanted" && pwd)" | md5sum | cut -c1-12)"
    say "the postgres user cannot enter $(cd "$wanted/.." && pwd); keeping this cluster in $alt instead" >&2
    mkdir -p "$alt"
    echo "$alt"
  else
    (cd "$wanted" && pwd)
  fi
}

PG_DIR=""
PG_PORT=""
PG_STARTED_HERE=""
# start_cluster DIR PORT: creates (first time) and starts a cluster on 127.0.0.1:PORT.
start_cluster() {
  PG_DIR=$(cluster_dir_for "$1")
  PG_PORT=$2
  mkdir -p "$PG_DIR/run"
  is_root && chown -R postgres:postgres "$PG_DIR"
  if [ ! -f "$PG_DIR/data/PG_VERSION" ]; then
    say "creating a PostgreSQL cluster in $PG_DIR"
    pg_as_owner "$PG_BIN/initdb" -D "$PG_DIR/data" -U postgres --auth=trust --encoding=UTF8 --locale=C.UTF-8 >"$PG_DIR/initdb.log" 2>&1 \
      || { cat "$PG_DIR/initdb.log" >&2; die "initdb failed (log above)"; }
  fi
  if pg_as_owner "$PG_BIN/pg_ctl" -D "$PG_DIR/data" status >/dev/null 2>&1; then
    say "PostgreSQL is already running in $PG_DIR; using it"
    return 0
  fi
  say "starting PostgreSQL on 127.0.0.1:$PG_PORT"
  # setsid: Ctrl-C in the terminal must reach the app, not the database; we stop it ourselves.
  setsid -w bash -c "$(declare -f is_root pg_as_owner); pg_as_owner '$PG_BIN/pg_ctl' -D '$PG_DIR/data' -w -t 60 \
    -o '-p $PG_PORT -k $PG_DIR/run -c listen_addresses=127.0.0.1 -c fsync=${PG_FSYNC:-on}' -l '$PG_DIR/postgres.log' start" >/dev/null \
    || { tail -20 "$PG_DIR/postgres.log" >&2; die "PostgreSQL did not start (log above). Is port $PG_PORT taken?"; }
  PG_STARTED_HERE=1
}

stop_cluster() {
  if [ -n "$PG_STARTED_HERE" ] && [ -n "$PG_DIR" ]; then
    say "stopping PostgreSQL"
    pg_as_owner "$PG_BIN/pg_ctl" -D "$PG_DIR/data" -m fast -w stop >/dev/null 2>&1 || true
    PG_STARTED_HERE=""
  fi
}

# psql_admin SQL: runs SQL on the cluster's maintenance database.
psql_admin() {
  psql -X -q -v ON_ERROR_STOP=1 -h 127.0.0.1 -p "$PG_PORT" -U postgres -d postgres -c "$1"
}

create_database() {
  local name=$1
  if [ "$(psql -X -tA -h 127.0.0.1 -p "$PG_PORT" -U postgres -d postgres -c "select 1 from pg_database where datname='$name'")" != "1" ]; then
    psql_admin "create database \"$name\""
  fi
}

recreate_database() {
  psql_admin "drop database if exists \"$1\" with (force)"
  psql_admin "create database \"$1\""
}

ensure_psql() {
  command -v psql >/dev/null && return 0
  [ -x "$PG_BIN/psql" ] && { PATH="$PG_BIN:$PATH"; export PATH; return 0; }
  if is_root && command -v apt-get >/dev/null; then apt_install postgresql-client; return 0; fi
  die "psql is missing. Install it, e.g. 'sudo apt-get install postgresql-client'."
}

# Debian's Chromium for the end-to-end tests; never a browser download.
ensure_chromium() {
  [ -x /usr/bin/chromium ] && return 0
  if is_root && command -v apt-get >/dev/null; then
    apt_install chromium
    [ -x /usr/bin/chromium ] && return 0
  fi
  die "Chromium is missing for the end-to-end tests. Install Debian's package: 'sudo apt-get install chromium'."
}

# Debian's socat makes the pseudo-terminal pairs the serial-link tests run over.
ensure_socat() {
  command -v socat >/dev/null && return 0
  if is_root && command -v apt-get >/dev/null; then apt_install socat; command -v socat >/dev/null && return 0; fi
  die "socat is missing for the serial-link tests. Install Debian's package: 'sudo apt-get install socat'."
}

# Debian's AVR tool chain, Arduino core and simavr: the firmware tests build the example sketch for an
# ATmega2560 and run it on an emulated board (firmware/README.md).
AVR_PACKAGES="gcc-avr avr-libc arduino-core-avr simavr libsimavr-dev libsimavrparts1 libelf-dev"
ensure_avr_tools() {
  have_avr_tools() {
    command -v avr-gcc >/dev/null && command -v avr-g++ >/dev/null && command -v avr-size >/dev/null \
      && [ -f /usr/share/arduino/hardware/arduino/avr/cores/arduino/Arduino.h ] \
      && [ -f /usr/include/simavr/sim_avr.h ] && [ -f /usr/include/libelf.h ]
  }
  have_avr_tools && return 0
  if is_root && command -v apt-get >/dev/null; then
    # shellcheck disable=SC2086
    apt_install $AVR_PACKAGES
    have_avr_tools && return 0
  fi
  die "The AVR tools for the firmware tests are missing. Install Debian's packages: 'sudo apt-get install $AVR_PACKAGES'."
}

# A secret per checkout for signing sessions, made once and kept in .data/.
ensure_auth_secret() {
  mkdir -p .data
  if [ ! -s .data/auth-secret ]; then
    node -e 'process.stdout.write(require("crypto").randomBytes(32).toString("hex"))' > .data/auth-secret
    chmod 600 .data/auth-secret
  fi
  cat .data/auth-secret
}
