#!/usr/bin/env bash
# Load test of the read path: `tidetally serve` on the demo coastline (real fitted outlooks,
# startup fits into a fresh store), wrk against one gauge's precomputed outlook, an outlook
# with custom k (re-serialized per request), all gauges' outlooks (assembled and serialized
# per request), the gauge list and /healthz; nginx serving the same outlook bytes as a static
# file gives a same-machine baseline, so the figures can be quoted as ratios on a shared,
# noisy machine. Prints the median of RUNS runs per target (req/s and p99 latency), the
# startup time to ready, and the median single-request latency of the all-gauges outlook.
#
# Then the compressed reads: the all-gauges outlook set of GAUGES (100) gauges, each serving a
# copy of the demo outlook under its own id (the `load_target` example; numbers nudged so the
# copies differ), asked with `Accept-Encoding: br` and `gzip`; and one outlook against nginx
# serving the same bytes (plain, the same gzip file by gzip_static, the same brotli file with
# its header), as RUNS paired runs (tidetally then nginx) with the median of the ratios.
#
#   server/bench/load.sh            # RUNS=3 DURATION=10s CONNECTIONS=64 THREADS=2 GAUGES=100
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
GAUGES=${GAUGES:-100}
SET_PORT=${SET_PORT:-8097}

need() { command -v "$1" >/dev/null 2>&1 || command -v "/usr/sbin/$1" >/dev/null 2>&1; }
if ! need wrk || ! need nginx; then
    echo "== installing wrk and nginx" >&2
    SUDO=""; [ "$(id -u)" -ne 0 ] && SUDO=sudo
    $SUDO apt-get update -qq && $SUDO apt-get install -y -qq wrk nginx >/dev/null
fi
NGINX=$(command -v nginx || echo /usr/sbin/nginx)

echo "== building tidetally ($PROFILE)" >&2
cargo build -q --profile "$PROFILE" -p tidetally-server --bin tidetally --example load_target
BIN="target/$PROFILE/tidetally"
SET_BIN="target/$PROFILE/examples/load_target"
[ "$PROFILE" = dev ] && BIN="target/debug/tidetally" && SET_BIN="target/debug/examples/load_target"

WORK=$(mktemp -d)
SERVER_PID=""
SET_PID=""
cleanup() {
    [ -n "$SERVER_PID" ] && kill "$SERVER_PID" 2>/dev/null || true
    [ -n "$SET_PID" ] && kill "$SET_PID" 2>/dev/null || true
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
mkdir -p "$WORK/www/br"
cp "$WORK/outlook.json" "$WORK/www/outlook.json"
# The same coded bytes tidetally sends: gzip_static serves outlook.json.gz to gzip clients,
# and /br/ serves the brotli copy with its Content-Encoding.
curl -fs -H 'Accept-Encoding: gzip' "http://127.0.0.1:$PORT$OUTLOOK" >"$WORK/www/outlook.json.gz"
curl -fs -H 'Accept-Encoding: br' "http://127.0.0.1:$PORT$OUTLOOK" >"$WORK/www/br/outlook.json"
cat >"$WORK/nginx.conf" <<CONF
worker_processes 1;
pid $WORK/nginx.pid;
error_log $WORK/nginx.err;
events { worker_connections 1024; }
http {
    access_log off;
    client_body_temp_path $WORK; proxy_temp_path $WORK; fastcgi_temp_path $WORK;
    uwsgi_temp_path $WORK; scgi_temp_path $WORK;
    server {
        listen 127.0.0.1:$NGINX_PORT; root $WORK/www; etag on; gzip_static on;
        location /br/ { add_header Content-Encoding br; add_header Vary Accept-Encoding; }
    }
}
CONF
"$NGINX" -c "$WORK/nginx.conf" -p "$WORK"

median() { sort -n | awk '{a[NR]=$1} END {print a[int((NR+1)/2)]}'; }

# One wrk run: "req/s p99-ms" (an optional Accept-Encoding as the second argument).
wrk_once() {
    local url=$1 coding=${2:-} out
    if [ -n "$coding" ]; then
        out=$(wrk --latency -t"$THREADS" -c"$CONNECTIONS" -d"$DURATION" -H "Accept-Encoding: $coding" "$url")
    else
        out=$(wrk --latency -t"$THREADS" -c"$CONNECTIONS" -d"$DURATION" "$url")
    fi
    if echo "$out" | grep -q "Non-2xx"; then echo "wrk saw errors on $url: $out" >&2; exit 1; fi
    echo "$(echo "$out" | awk '/Requests\/sec/ {print $2}') $(echo "$out" | awk '$1 == "99%" {v=$2; if (v ~ /us$/) {sub(/us/,"",v); v/=1000} else if (v ~ /ms$/) {sub(/ms/,"",v)} else if (v ~ /s$/) {sub(/s/,"",v); v*=1000}; print v}')"
}

# Median over RUNS of req/s and of the p99 latency (ms) that wrk reports.
median_rps_p99() {
    local url=$1 coding=${2:-} rps=() p99=() r p
    for _ in $(seq "$RUNS"); do
        read -r r p <<<"$(wrk_once "$url" "$coding")"
        rps+=("$r"); p99+=("$p")
    done
    echo "$(printf '%s\n' "${rps[@]}" | median) $(printf '%s\n' "${p99[@]}" | median)"
}

# RUNS paired runs (tidetally, then nginx on the same bytes): "median-ratio median-a median-b".
paired() {
    local a=$1 b=$2 coding=${3:-} ra rb ratios=() as=() bs=() _p
    for _ in $(seq "$RUNS"); do
        read -r ra _p <<<"$(wrk_once "$a" "$coding")"
        read -r rb _p <<<"$(wrk_once "$b" "$coding")"
        as+=("$ra"); bs+=("$rb")
        ratios+=("$(echo "scale=3; $ra / $rb" | bc)")
    done
    echo "$(printf '%s\n' "${ratios[@]}" | median) $(printf '%s\n' "${as[@]}" | median) $(printf '%s\n' "${bs[@]}" | median)"
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

echo
echo "== compressed reads: $GAUGES gauges, each a nudged copy of the outlook above"
env -u TIDETALLY_TOKEN "$SET_BIN" "127.0.0.1:$SET_PORT" "$GAUGES" "$WORK/outlook.json" \
    >"$WORK/set.out" 2>"$WORK/set.err" &
SET_PID=$!
for _ in $(seq 1200); do
    curl -fs "http://127.0.0.1:$SET_PORT/readyz" >/dev/null 2>&1 && break
    sleep 0.05
done
SET="http://127.0.0.1:$SET_PORT/api/v1/outlooks"
for coding in identity gzip br; do
    echo "all-gauges set, $coding: $(curl -fs -H "Accept-Encoding: $coding" "$SET" | wc -c) bytes"
done
printf '%-50s %12s %10s\n' target "median req/s" "p99 ms"
for target in \
    "set of $GAUGES, no season, br|$SET|br" \
    "set of $GAUGES, no season, gzip|$SET|gzip" \
    "set of $GAUGES, ?season=2026-DJF, br|$SET?season=2026-DJF|br" \
    "set of $GAUGES, no season, identity|$SET|identity"; do
    IFS='|' read -r name url coding <<<"$target"
    read -r rps p99 <<<"$(median_rps_p99 "$url" "$coding")"
    printf '%-50s %12s %10s\n' "$name" "$rps" "$p99"
done

echo
echo "one outlook vs nginx on the same bytes, $RUNS paired runs (median ratio; medians)"
printf '%-24s %8s %14s %14s\n' coding ratio "tidetally r/s" "nginx r/s"
for coding in identity gzip br; do
    nginx_url="http://127.0.0.1:$NGINX_PORT/outlook.json"
    [ "$coding" = br ] && nginx_url="http://127.0.0.1:$NGINX_PORT/br/outlook.json"
    read -r ratio a b <<<"$(paired "http://127.0.0.1:$PORT$OUTLOOK" "$nginx_url" "$coding")"
    printf '%-24s %8s %14s %14s\n' "$coding" "$ratio" "$a" "$b"
done
echo "($THREADS wrk threads, $CONNECTIONS connections, $DURATION runs; load average $(cut -d' ' -f1-3 /proc/loadavg); $(date -u +%F))"
