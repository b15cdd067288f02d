#!/usr/bin/env bash
# Load test of the read path: wrk against `tidetally`'s precomputed outlook, the gauge list,
# an outlook with custom k (re-serialized per request) and /healthz; nginx serving the same
# outlook bytes as a static file gives a same-machine baseline, so the figures can be quoted
# as ratios on a shared, noisy machine. Prints the median of RUNS runs per target.
#
#   server/bench/load.sh            # RUNS=3 DURATION=10s CONNECTIONS=64 THREADS=2
#
# Installs wrk and nginx with apt-get when they are missing (Debian/Ubuntu).
set -euo pipefail
cd "$(dirname "$0")/../.."

RUNS=${RUNS:-3}
DURATION=${DURATION:-10s}
CONNECTIONS=${CONNECTIONS:-64}
THREADS=${THREADS:-2}
PORT=${PORT:-8099}
NGINX_PORT=${NGINX_PORT:-8098}
PROFILE=${PROFILE:-release}

need() { command -v "$1" >/dev/null 2>&1 || command -v "/usr/sbin/$1" >/dev/null 2>&1; }
if ! need wrk || ! need nginx; then
    echo "== installing wrk and nginx" >&2
    SUDO=""; [ "$(id -u)" -ne 0 ] && SUDO=sudo
    $SUDO apt-get update -qq && $SUDO apt-get install -y -qq wrk nginx >/dev/null
fi
NGINX=$(command -v nginx || echo /usr/sbin/nginx)

echo "== building the load target ($PROFILE)" >&2
cargo build -q --profile "$PROFILE" -p tidetally-server --example load_target
BIN="target/$PROFILE/examples/load_target"
[ "$PROFILE" = dev ] && BIN="target/debug/examples/load_target"

WORK=$(mktemp -d)
SERVER_PID=""
cleanup() {
    [ -n "$SERVER_PID" ] && kill "$SERVER_PID" 2>/dev/null || true
    [ -f "$WORK/nginx.pid" ] && kill "$(cat "$WORK/nginx.pid")" 2>/dev/null || true
    rm -rf "$WORK"
}
trap cleanup EXIT

"$BIN" "127.0.0.1:$PORT" 20 >"$WORK/server.out" 2>"$WORK/server.err" &
SERVER_PID=$!
for _ in $(seq 100); do
    curl -fs "http://127.0.0.1:$PORT/readyz" >/dev/null 2>&1 && break
    sleep 0.1
done

OUTLOOK="/api/v1/gauges/g07/outlook?season=2026-DJF"
curl -fs "http://127.0.0.1:$PORT$OUTLOOK" >"$WORK/outlook.json"
mkdir -p "$WORK/www"
cp "$WORK/outlook.json" "$WORK/www/outlook.json"
cat >"$WORK/nginx.conf" <<CONF
worker_processes 1;
pid $WORK/nginx.pid;
error_log $WORK/nginx.err;
events { worker_connections 1024; }
http {
    access_log off;
    client_body_temp_path $WORK; proxy_temp_path $WORK; fastcgi_temp_path $WORK;
    uwsgi_temp_path $WORK; scgi_temp_path $WORK;
    server { listen 127.0.0.1:$NGINX_PORT; root $WORK/www; etag on; }
}
CONF
"$NGINX" -c "$WORK/nginx.conf" -p "$WORK"

median_rps() {
    local url=$1 values=()
    for _ in $(seq "$RUNS"); do
        values+=("$(wrk -t"$THREADS" -c"$CONNECTIONS" -d"$DURATION" "$url" | awk '/Requests\/sec/ {print $2}')")
    done
    printf '%s\n' "${values[@]}" | sort -n | awk '{a[NR]=$1} END {print a[int((NR+1)/2)]}'
}

echo "bytes of one outlook: $(wc -c <"$WORK/outlook.json")"
printf '%-44s %12s\n' target "median req/s"
for target in \
    "tidetally outlook (precomputed)|http://127.0.0.1:$PORT$OUTLOOK" \
    "tidetally outlook with k=1,5,10,20|http://127.0.0.1:$PORT/api/v1/gauges/g07/outlook?k=1,5,10,20" \
    "tidetally gauge list (20 gauges)|http://127.0.0.1:$PORT/api/v1/gauges" \
    "tidetally /healthz|http://127.0.0.1:$PORT/healthz" \
    "nginx static copy of the outlook|http://127.0.0.1:$NGINX_PORT/outlook.json"; do
    printf '%-44s %12s\n' "${target%%|*}" "$(median_rps "${target#*|}")"
done
echo "($THREADS wrk threads, $CONNECTIONS connections, $DURATION x $RUNS runs; wrk shares the cores)"
