#!/bin/bash
# Where the service's memory goes over the bench run, phase by phase: 250,000 customers, four
# campaigns of 250,000 contacts, five refreshes of the bench report, then the BI pull at 50
# connections, on one fresh service on a fresh SQLite file. Needs the files of
# `npx tsx bench/run.ts --sizes 1000000 --steps upload` in bench/out of the checkout.
#   bench/memory-phases.sh <checkout> <tag> [NAME=value …]
# SERVICE_ENTRY=/path/to/main.js runs compiled JavaScript instead of the sources through tsx;
# SETTLE_SECONDS=n waits before the last reading; SHOW_LOG=1 prints the service's output.
# After each phase prints the peak resident set so far (VmHWM), the resident set now, and how
# much of it is anonymous memory (heaps, page caches) and file-backed (code); at the end the V8
# heap, external memory and the rest at the sampled peak (bench/memory-sampler.mjs).
set -euo pipefail
here=$(cd "$(dirname "$0")" && pwd)
checkout=$1; tag=$2; shift 2
cd "$checkout"
work=$(mktemp -d); trap 'rm -rf "$work"' EXIT
port=$((21000 + RANDOM % 9000))
env DATABASE_URL="$work/bench.sqlite" AUTH_MODE=open SCHEDULE_ENABLED=false HOST=127.0.0.1 LOG_LEVEL=warn RATE_LIMIT_PER_KEY=0 RATE_LIMIT_PER_ADDRESS=0 MAX_EVENT_LOOP_DELAY_MS=0 \
  MEM_SAMPLE_FILE="$work/memory.jsonl" PORT=$port "$@" node --import "$here/memory-sampler.mjs" ${SERVICE_ENTRY:---import tsx src/main.ts} > "$work/log.txt" 2>&1 &
pid=$!
for _ in $(seq 1 150); do curl -sf "http://127.0.0.1:$port/healthz" > /dev/null && break; sleep 0.2; done
phase() {
  awk -v tag="$tag" -v phase="$1" '
    /^VmHWM/ { hwm = $2 } /^VmRSS/ { rss = $2 } /^RssAnon/ { anon = $2 } /^RssFile/ { file = $2 } /^Threads/ { threads = $2 }
    END { printf "%s %-9s peak %4d MiB, now %4d MiB (anonymous %4d, file %3d), %d threads\n", tag, phase, hwm / 1024, rss / 1024, anon / 1024, file / 1024, threads }' "/proc/$pid/status"
}
post() { curl -sf -o /dev/null --data-binary "@$1" -H 'content-type: text/csv' "http://127.0.0.1:$port$2"; }
phase idle
post bench/out/customers-250000-4x250000-11.csv /v1/customers
phase customers
for n in 1 2 3 4; do post "bench/out/contacts-250000-4x250000-11-$n.csv" "/v1/campaigns/campaign-$n/contacts"; done
phase contacts
report=$(curl -sf -H 'content-type: application/json' "http://127.0.0.1:$port/v1/reports" \
  -d '{"name":"bench","source":{"campaign_ids":["campaign-1","campaign-2","campaign-3","campaign-4"]},"dimensions":["age_band","region","channel"]}' |
  python3 -c 'import json, sys; print(json.load(sys.stdin)["report_id"])')
for _ in 1 2 3 4 5; do curl -sf -o /dev/null -X POST "http://127.0.0.1:$port/v1/reports/$report/refresh"; done
phase refreshes
npx autocannon -c 50 -d 10 -H accept=text/csv "http://127.0.0.1:$port/v1/reports/$report/segments?format=csv" > /dev/null 2>&1
phase pull
sleep "${SETTLE_SECONDS:-0}"
phase settled
kill -TERM $pid; wait $pid || true
if [ -n "${SHOW_LOG:-}" ]; then cat "$work/log.txt"; fi
python3 "$here/memory-breakdown.py" "$work/memory.jsonl"
