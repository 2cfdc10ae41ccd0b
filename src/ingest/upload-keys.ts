/**
 * The register of one upload's keys: each key the upload has accepted, with the line it came
 * on, so that a key the upload repeats is refused naming the line of its first occurrence.
 *
 * Held as an open-addressing hash table over typed arrays, the keys' characters packed into
 * one growing byte arena (one byte a character when every character is below U+0100, two
 * otherwise). A JavaScript Map of 250,000 string keys leaves its strings and doubling hash
 * tables (about 16 MB per upload) in V8's heap for a lazy major collection; a temporary SQLite
 * table instead cost about 1.7 µs a key in a profile of 250,000 contacts. Here a key costs a
 * hash over its characters and, on a match, one comparison, and 250,000 keys of ten characters
 * take about 6 MB in six typed arrays, dropped whole when the upload ends.
 */

/** Bit of `lengths` marking a key stored two bytes a character. */
const WIDE = 0x8000_0000;
const FIRST_CAPACITY = 1 << 12;
const FIRST_ARENA_BYTES = 1 << 16;

export class UploadKeyRegister {
  /** Per slot of the hash table: 0 when free, else 1 + the index of the key held there. */
  private slots = new Uint32Array(FIRST_CAPACITY * 2);
  private hashes = new Uint32Array(FIRST_CAPACITY);
  private lines = new Uint32Array(FIRST_CAPACITY);
  private starts = new Uint32Array(FIRST_CAPACITY);
  /** Characters of each key, with `WIDE` set when it is stored two bytes a character. */
  private lengths = new Uint32Array(FIRST_CAPACITY);
  private arena = new Uint8Array(FIRST_ARENA_BYTES);
  private arenaUsed = 0;
  private count = 0;

  /** Keys registered so far. */
  get size(): number {
    return this.count;
  }

  /**
   * Records `key` as first seen on `line` and returns null, or returns the line it was first
   * seen on. Lines are whole numbers below 2^32.
   *
   * @example register.firstSeenOn('C1', 2) // → null; register.firstSeenOn('C1', 9) // → 2
   */
  firstSeenOn(key: string, line: number): number | null {
    const hash = hashOf(key);
    const mask = this.slots.length - 1;
    let slot = hash & mask;
    for (;;) {
      const held = this.slots[slot] as number;
      if (held === 0) break;
      const index = held - 1;
      if (this.hashes[index] === hash && this.holds(index, key)) return this.lines[index] as number;
      slot = (slot + 1) & mask;
    }
    this.add(key, hash, line, slot);
    return null;
  }

  /** Forgets every key and gives back the memory held beyond the first small tables. */
  clear(): void {
    this.slots = new Uint32Array(FIRST_CAPACITY * 2);
    this.hashes = new Uint32Array(FIRST_CAPACITY);
    this.lines = new Uint32Array(FIRST_CAPACITY);
    this.starts = new Uint32Array(FIRST_CAPACITY);
    this.lengths = new Uint32Array(FIRST_CAPACITY);
    this.arena = new Uint8Array(FIRST_ARENA_BYTES);
    this.arenaUsed = 0;
    this.count = 0;
  }

  private add(key: string, hash: number, line: number, freeSlot: number): void {
    const index = this.count;
    if (index === this.hashes.length) this.growEntries();
    const wide = isWide(key);
    const bytes = wide ? key.length * 2 : key.length;
    if (this.arenaUsed + bytes > this.arena.length) this.growArena(bytes);
    const start = this.arenaUsed;
    const arena = this.arena;
    if (wide) {
      for (let offset = 0; offset < key.length; offset++) {
        const code = key.charCodeAt(offset);
        arena[start + offset * 2] = code & 0xff;
        arena[start + offset * 2 + 1] = code >>> 8;
      }
    } else {
      for (let offset = 0; offset < key.length; offset++) arena[start + offset] = key.charCodeAt(offset);
    }
    this.arenaUsed += bytes;
    this.hashes[index] = hash;
    this.lines[index] = line;
    this.starts[index] = start;
    this.lengths[index] = wide ? (key.length | WIDE) >>> 0 : key.length;
    this.count += 1;
    // The table was sized before the entry arrays grew, so the free slot found is still valid
    // unless the table itself must grow (kept at most half full).
    if (this.count * 2 > this.slots.length) this.growSlots();
    else this.slots[freeSlot] = index + 1;
  }

  /** Whether the key stored at `index` is `key`. */
  private holds(index: number, key: string): boolean {
    const stored = this.lengths[index] as number;
    const wide = stored >= WIDE;
    const length = wide ? stored - WIDE : stored;
    if (length !== key.length) return false;
    const start = this.starts[index] as number;
    const arena = this.arena;
    if (wide) {
      for (let offset = 0; offset < length; offset++) {
        if (((arena[start + offset * 2] as number) | ((arena[start + offset * 2 + 1] as number) << 8)) !== key.charCodeAt(offset)) return false;
      }
      return true;
    }
    for (let offset = 0; offset < length; offset++) if (arena[start + offset] !== key.charCodeAt(offset)) return false;
    return true;
  }

  private growEntries(): void {
    const capacity = this.hashes.length * 2;
    this.hashes = grown(this.hashes, capacity);
    this.lines = grown(this.lines, capacity);
    this.starts = grown(this.starts, capacity);
    this.lengths = grown(this.lengths, capacity);
  }

  private growArena(needed: number): void {
    let size = this.arena.length * 2;
    while (size < this.arenaUsed + needed) size *= 2;
    const arena = new Uint8Array(size);
    arena.set(this.arena.subarray(0, this.arenaUsed));
    this.arena = arena;
  }

  /** Doubles the table and places every key again (including the one just added). */
  private growSlots(): void {
    const slots = new Uint32Array(this.slots.length * 2);
    const mask = slots.length - 1;
    for (let index = 0; index < this.count; index++) {
      let slot = (this.hashes[index] as number) & mask;
      while (slots[slot] !== 0) slot = (slot + 1) & mask;
      slots[slot] = index + 1;
    }
    this.slots = slots;
  }
}

function grown(values: Uint32Array<ArrayBuffer>, capacity: number): Uint32Array<ArrayBuffer> {
  const larger = new Uint32Array(capacity);
  larger.set(values);
  return larger;
}

function isWide(key: string): boolean {
  for (let offset = 0; offset < key.length; offset++) if (key.charCodeAt(offset) > 0xff) return true;
  return false;
}

/** FNV-1a over the key's UTF-16 code units, as an unsigned 32-bit number. */
function hashOf(key: string): number {
  let hash = 0x811c9dc5;
  for (let offset = 0; offset < key.length; offset++) {
    hash ^= key.charCodeAt(offset);
    hash = Math.imul(hash, 0x01000193);
  }
  return hash >>> 0;
}
