/**
 * How far V8 lets its heap grow past what the last full collection kept before it collects
 * again. V8's own factor (up to 4× when collections are cheap) let an upload's short-lived rows
 * that outlived a young-generation collection pile up in the old generation: 150 MiB of heap
 * per 250,000-contact upload before one full collection, most of it garbage. A smaller factor
 * runs full collections (tens of milliseconds at this service's heap sizes) more often instead.
 */
import v8 from 'node:v8';

/**
 * Sets V8's heap growing factor to 1 + `percent`/100 for this process and its worker threads
 * (V8 reads the flag at each full collection); 0 leaves V8's own factor. Throws nothing.
 *
 * @example limitHeapGrowth(50) // the heap may grow to 1.5 × what the last full collection kept
 */
export function limitHeapGrowth(percent: number): void {
  if (percent > 0) v8.setFlagsFromString(`--heap-growing-percent=${Math.round(percent)}`);
}
