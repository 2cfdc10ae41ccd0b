// Loaded into the service with `node --import bench/memory-sampler.mjs …` when MEM_SAMPLE_FILE
// is set: appends process.memoryUsage() (resident set, V8 heap, external memory) every 100 ms as
// one JSON line, so a run's peak can be split into heap, external and the rest (native).
import fs from 'node:fs';

const file = process.env.MEM_SAMPLE_FILE;
if (file) {
  setInterval(() => {
    const { rss, heapTotal, heapUsed, external, arrayBuffers } = process.memoryUsage();
    fs.appendFileSync(file, `${JSON.stringify({ t: Date.now(), rss, heapTotal, heapUsed, external, arrayBuffers })}\n`);
  }, 100).unref();
}
