/**
 * The hash of a covariate point for `GroupAccumulator`'s (`group-accumulator.ts`)
 * open-addressing table (Knuth, TAOCP vol. 3, §6.4, linear probing): FNV-1a
 * steps over the raw bits of each double (Fowler, Noll and Vo; -0 read as 0)
 * and the MurmurHash3 finaliser (Appleby), a loop that touches a batch's
 * first slots ahead of pass 1, and the table's doubling.
 */
const scratch = new Float64Array(1);
export const scratchWords = new Uint32Array(scratch.buffer);

/**
 * One 32-bit word into the hash: an FNV-1a step. It collides more often than
 * a random hash on structured keys (whole milliseconds, small codes), which
 * the exact key check absorbs; a stronger mix (MurmurHash3's block step) was
 * measured about a third slower on a million rows, since structured keys that
 * hash near each other also share cache lines of the table.
 */
export function block(hash: number, word: number): number {
  return Math.imul(hash ^ word, 0x01000193);
}

/** Put a covariate's bits in `scratchWords` (low word first), -0 as 0: the same covariate. */
export function loadBits(value: number): void {
  scratch[0] = value === 0 ? 0 : value;
}

/** Mix one double's bits (both words) into the hash. */
export function mix(hash: number, value: number): number {
  loadBits(value);
  return block(block(hash, scratchWords[0] as number), scratchWords[1] as number);
}

/** The MurmurHash3 finaliser, so that the low bits used for the slot depend on every input bit. */
export function finalise(hash: number): number {
  let h = hash ^ (hash >>> 16);
  h = Math.imul(h, 0x85ebca6b);
  h ^= h >>> 13;
  h = Math.imul(h, 0xc2b2ae35);
  return (h ^ (h >>> 16)) >>> 0;
}

/** As `touchRecords` (`group-accumulator.ts`) does for pass 2, for pass 1's first table slot of each row (`groupOf` holds the hashes then). */
export function touchSlots(table: Int32Array<ArrayBufferLike>, hashes: Int32Array, count: number, mask: number): number {
  let sum = 0;
  for (let i = 0; i < count; i += 1) sum += table[2 * ((hashes[i] as number) & mask)] as number;
  return sum;
}

/** The (group + 1, hash) table doubled, every entry re-inserted by its stored hash. */
export function rehash(table: Int32Array<ArrayBufferLike>, capacity: number): Int32Array<ArrayBufferLike> {
  const next = new Int32Array(capacity * 4);
  const mask = capacity * 2 - 1;
  for (let old = 0; old < capacity; old += 1) {
    const entry = table[2 * old] as number;
    if (entry === 0) continue;
    const entryHash = table[2 * old + 1] as number;
    let position = entryHash & mask;
    while (next[2 * position] !== 0) position = (position + 1) & mask;
    next[2 * position] = entry;
    next[2 * position + 1] = entryHash;
  }
  return next;
}
