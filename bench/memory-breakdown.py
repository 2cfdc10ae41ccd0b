"""The service's memory at its sampled peak, split into V8 heap, external and the rest.

Reads the JSON lines bench/memory-sampler.mjs writes (one process.memoryUsage() a line);
used by bench/upload-cpu-memory.sh and bench/memory-phases.sh.
"""
import json
import sys

rows = [json.loads(line) for line in open(sys.argv[1])]
top = max(rows, key=lambda row: row['rss'])
mib = lambda value: value / 1048576
print('at the sampled peak: RSS %.0f MiB = V8 heap %.0f (used %.0f) + external %.0f + other %.0f' % (
    mib(top['rss']), mib(top['heapTotal']), mib(top['heapUsed']), mib(top['external']), mib(top['rss'] - top['heapTotal'] - top['external'])))
