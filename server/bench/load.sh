#!/usr/bin/env bash
# Load test of the read path: `tidetally serve` on the demo coastline (real fitted outlooks,
# startup fits into a fresh store), wrk against one gauge's precomputed outlook, an outlook
# with custom k (re-serialized per request), all gauges' outlooks (assembled and serialized
# per request), the gauge list and /healthz; nginx serving the same outlook bytes as a static
# file gives a same-machine baseline, so the figures can be quoted as ratios on a shared,
# noisy machine. Prints the median of RUNS runs per target (req/s and p99 latency), the
# startup time to ready, and the median single-request latency of the all-gauges outlook.
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

echo "== building tidetally ($PROFILE)" >&2
cargo build -q --profile "$PROFILE" -p tidetally-server --bin tidetally
BIN="target/$PROFILE/tidetally"
[ "$PROFILE" = dev ] && BIN="target/debug/tidetally"

WORK=$(mktemp -d)
SERVER_PID=""
cleanup() {
    [ -n "$SERVER_PID" ] && kill "$SERVER_PID" 2>/dev/null || true
    [ -f "$WORK/nginx.pid" ] && kill "$(cat "$WORK/nginx.pid")" 2>/dev/null || true
    rm -rf "$WORK"
}
trap cleanup EXIT

START=$(date +%s.%N)
env -u TIDETALLY_TOKEN "$BIN" serve --data demo-data/gauges --db "$WORK/bench.db" \
    --addr "127.0.0.1:$PORT" >"$WORK/server.out" 2>"$WORK/server.err" &
SERVER_PID=$!
for _ in $(seq 1200); do
    curl -fs "http://127.0.0.1:$PORT/readyz" >/dev/null 2>&1 && break
    sleep 0.05
done
READY=$(date +%s.%N)
echo "startup to ready (seed + fit of the 4 demo gauges): $(echo "$READY - $START" | bc) s"

OUTLOOK="/api/v1/gauges/port-tamsin/outlook?season=2026-DJF"
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

median() { sort -n | awk '{a[NR]=$1} END {print a[int((NR+1)/2)]}'; }

# Median over RUNS of req/s and of the p99 latency (ms) that wrk reports.
median_rps_p99() {
    local url=$1 rps=() p99=() out
    for _ in $(seq "$RUNS"); do
        out=$(wrk --latency -t"$THREADS" -c"$CONNECTIONS" -d"$DURATION" "$url")
        rps+=("$(echo "$out" | awk '/Requests\/sec/ {print $2}')")
        p99+=("$(echo "$out" | awk '$1 == "99%" {v=$2; if (v ~ /us$/) {sub(/us/,"",v); v/=1000} else if (v ~ /ms$/) {sub(/ms/,"",v)} else if (v ~ /s$/) {sub(/s/,"",v); v*=1000}; print v}')")
    done
    echo "$(printf '%s\n' "${rps[@]}" | median) $(printf '%s\n' "${p99[@]}" | median)"
}

echo "bytes of one outlook: $(wc -c <"$WORK/outlook.json")"
ALL="http://127.0.0.1:$PORT/api/v1/outlooks?season=2026-DJF"
echo "all-gauges outlook, one request at a time, median of 51: $(
    for _ in $(seq 51); do curl -s -o /dev/null -w '%{time_total}\n' "$ALL"; done |
        awk '{print $1 * 1000}' | median) ms ($(curl -s "$ALL" | wc -c) bytes)"
printf '%-44s %12s %10s\n' target "median req/s" "p99 ms"
for target in \
    "tidetally outlook (precomputed)|http://127.0.0.1:$PORT$OUTLOOK" \
    "tidetally outlook with k=1,5,10,20|http://127.0.0.1:$PORT/api/v1/gauges/port-tamsin/outlook?k=1,5,10,20" \
    "tidetally all gauges' outlooks (4)|$ALL" \
    "tidetally gauge list (4 gauges)|http://127.0.0.1:$PORT/api/v1/gauges" \
    "tidetally /healthz|http://127.0.0.1:$PORT/healthz" \
    "nginx static copy of the outlook|http://127.0.0.1:$NGINX_PORT/outlook.json"; do
    read -r rps p99 <<<"$(median_rps_p99 "${target#*|}")"
    printf '%-44s %12s %10s\n' "${target%%|*}" "$rps" "$p99"
done
echo "($THREADS wrk threads, $CONNECTIONS connections, $DURATION x $RUNS runs; wrk shares the cores)"
