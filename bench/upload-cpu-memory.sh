#!/bin/bash
# The service's CPU seconds per upload and its peak memory, for comparing two checkouts on the
# same bench files: 250,000 customers, then four campaigns of 250,000 contacts, posted with curl
# to one fresh service on a fresh SQLite file. Needs the files of
# `npx tsx bench/run.ts --sizes 1000000 --steps upload` in bench/out of the checkout.
#   bench/upload-cpu-memory.sh <checkout> <tag> [NAME=value …]
# Prints one line: CPU seconds of the customers upload and of each contacts upload, the peak
# resident set (VmHWM), the load average; and the V8 heap, external memory and the rest at the
# peak, sampled by bench/memory-sampler.mjs.
set -euo pipefail
sampler=$(cd "$(dirname "$0")" && pwd)/memory-sampler.mjs
checkout=$1; tag=$2; shift 2
cd "$checkout"
work=$(mktemp -d); trap 'rm -rf "$work"' EXIT
port=$((21000 + RANDOM % 9000))
env DATABASE_URL="$work/bench.sqlite" AUTH_MODE=open SCHEDULE_ENABLED=false HOST=127.0.0.1 LOG_LEVEL=warn RATE_LIMIT_PER_KEY=0 RATE_LIMIT_PER_ADDRESS=0 MAX_EVENT_LOOP_DELAY_MS=0 \
  MEM_SAMPLE_FILE="$work/memory.jsonl" PORT=$port "$@" node --import "$sampler" --import tsx src/main.ts > "$work/log.txt" 2>&1 &
pid=$!
for _ in $(seq 1 150); do curl -sf "http://127.0.0.1:$port/healthz" > /dev/null && break; sleep 0.2; done
cpu() { awk '{print ($14 + $15) / 100}' "/proc/$pid/stat"; }
post() { curl -sf -o /dev/null --data-binary "@$1" -H 'content-type: text/csv' "http://127.0.0.1:$port$2"; }
before=$(cpu)
post bench/out/customers-250000-4x250000-11.csv /v1/customers
after=$(cpu); line="$tag customers $(echo "$after - $before" | bc) s"
for n in 1 2 3 4; do
  before=$after
  post "bench/out/contacts-250000-4x250000-11-$n.csv" "/v1/campaigns/campaign-$n/contacts"
  after=$(cpu); line="$line, contacts $n $(echo "$after - $before" | bc) s"
done
peak=$(awk '/VmHWM/ {print int($2 / 1024)}' "/proc/$pid/status")
echo "$line; peak RSS $peak MiB; load $(cut -d' ' -f1-3 /proc/loadavg)"
kill -TERM $pid; wait $pid || true
python3 "$(dirname "$sampler")/memory-breakdown.py" "$work/memory.jsonl"
