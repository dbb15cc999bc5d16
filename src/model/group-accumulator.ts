/**
 * Rows collapsed, batch by batch, into binomial counts at distinct covariate
 * points (see `collapse.ts` for why collapsing is exact).
 *
 * Collapsing uses an open-addressing hash table on the raw covariate bits
 * (Knuth, TAOCP vol. 3, §6.4, linear probing), grown with the number of
 * distinct points, so it costs O(rows) time and O(groups) memory, and never an
 * object or a string per row. Large files without weights or players go
 * through a direct index first (a latency grid of 0.01 ms, see
 * {@link GroupAccumulator}), which needs neither a hash nor a key check.
 * The hash is in `covariate-hash.ts`, the direct index's shape and loops in
 * `direct-index.ts`.
 */
import type { CollapsedTrials } from './collapsed-trials.js';
import { type KeptColumns, type RecordLayout, columnsFromKept, columnsFromKeys, columnsFromRecords } from './group-columns.js';
import { block, finalise, mix, rehash, touchSlots } from './covariate-hash.js';
import { GRID_LEVELS, GRID_SCALES, GRID_STEPS, type OffGridRows, ScaleCodes, addGroupCounts, gatherOffGrid, gridCells, offGridColumns, readCells } from './direct-index.js';

/**
 * Records a {@link GroupAccumulator} reserves at most up front, for as many
 * groups as rows are expected (the groups are at most the rows). The records
 * are zero pages until written, so what is reserved and never used costs
 * address space, not memory; reserving spares the copies (and fresh pages)
 * of growing by doubling: about 20 ms of a million rows.
 */
const RESERVED_GROUPS = 1 << 22;

/**
 * Rows added to a {@link GroupAccumulator} at a time; group order depends on
 * it (see there), so every caller uses this one. 8,192 rather than more so
 * that the table slots and records a batch touches ahead of its passes (about
 * a megabyte) are still in cache when the pass reaches them: a few per cent
 * faster than 16,384 on a million rows.
 */
export const COLLAPSE_BATCH_ROWS = 1 << 13;

/**
 * With `keepDistinct`, the share of the first full batch's rows that must merge into earlier rows
 * for the accumulator to go on merging; below it, every row is kept as read (see the constructor).
 */
export const MIN_MERGED_SHARE = 0.1;

/** Rows expected before an accumulator uses the direct index by default (below, the hash table alone is as fast). */
export const GRID_MIN_ROWS = 1 << 16;

/** Columns of rows to collapse (the first `count` entries of each are read). */
export interface RowColumns {
  readonly latency: Float64Array;
  readonly scale: Float64Array;
  /** Numeric difficulty or level codes. */
  readonly difficulty: Float64Array | Int32Array;
  /** Prior weights, or null for weight 1. */
  readonly weight: Float64Array | null;
  /** Player codes, or null when players are not kept apart. */
  readonly player: Int32Array | null;
  readonly successes: Float64Array;
  readonly attempts: Float64Array;
}

/**
 * Collapses rows, batch by batch, into groups at distinct (latency, scale,
 * difficulty[, prior weight][, player]) points. Feed it rows with
 * {@link addRows} (a file reader does, one batch of at most
 * {@link COLLAPSE_BATCH_ROWS} rows at a time, so a large file is never held
 * row by row), then {@link finish}.
 *
 * Per batch: the hashes first, in a loop of their own; then pass 1 over an
 * open-addressing table of (group + 1, 32-bit hash) pairs, kept at most
 * three-quarters full and doubled as groups appear: a row takes the group
 * whose stored hash equals its own, and a new point appends its key to
 * `records`; then pass 2 checks every row's key against its group's exactly
 * and adds its counts there (one record per group holds the key and the
 * counts side by side, so a row touches one record). The table holds the
 * first point of each hash; the rare row whose hash collided with another
 * point's follows that point's chain of same-hash points (a map from a group
 * to the next) and is compared exactly there, or starts a new point at the
 * chain's end. Before each pass a loop of independent loads touches the
 * slots (pass 1) or records (pass 2) the batch's rows will use, so that their
 * cache and TLB misses overlap (see `touchRecords`).
 *
 * The direct index (when rows carry neither weights nor players and many
 * rows are expected; `direct-index.ts` says when a row qualifies and why it
 * is exact) gives most rows their group from a flat table with no hash and
 * no key check; rows that do not qualify go through the hash table as above.
 *
 * Groups come in order of first appearance, except that in a batch the new
 * points of rows that went through the hash table come after those of rows
 * that went through the direct index, and a point found only through a hash
 * collision comes after the other new points of its batch.
 *
 * Cost: O(rows) expected time; memory a table of 4/3 to 8/3 slots of 8 bytes
 * and a record of 5 to 7 doubles per group (reserved for the expected rows,
 * touched only as groups appear), and 4 bytes per row of a batch; with the
 * direct index, 5 doubles per group (3 of key, 2 of counts; records only for
 * the groups the hash table found) and the cells in use (4 bytes each, about
 * 1.4 MiB for latencies over 5-230 ms at 15 scale-level pairs).
 */
export class GroupAccumulator {
  private readonly weightAt: number;
  private readonly playerAt: number;
  /** Record: latency, scale, difficulty, successes, attempts[, weight][, player]. */
  private readonly stride: number;
  private readonly hasWeight: boolean;
  private readonly hasPlayer: boolean;
  /** Whether rows merge (false from the start, or from the second batch on under `keepDistinct`). */
  private merge: boolean;
  /** Whether the first full batch is still to decide between merging and keeping rows (see `keepDistinct`). */
  private undecided: boolean;
  /** The rows kept as they come, in the columns `finish` hands out (null until the first such row). */
  private kept: KeptColumns | null = null;
  /** Rows expected (the constructor's hint), the kept columns' first size. */
  private readonly expectedRows: number;
  private capacity = 1 << 12;
  private table: Int32Array<ArrayBufferLike> = new Int32Array(2 << 12);
  private records: Float64Array;
  private groupOf = new Int32Array(0);
  /** Group -> the next group whose key has the same 32-bit hash (see the class note). */
  private sameHash: Map<number, number> | null = null;
  /** The direct index, cell -> group + 1 (see the class note), or null when not used. */
  private grid: Int32Array | null = null;
  /** The scales that have a code in the direct index (see `ScaleCodes`). */
  private readonly scaleCodes = new ScaleCodes();
  /**
   * Successes and attempts of the groups the direct index counted, two doubles a group (a third of a record's
   * size, so that the counting loop's random accesses span a third of the memory); `columnsFromKeys` turns them into the
   * count columns.
   */
  private gridCounts: Float64Array = new Float64Array(0);
  /**
   * With the direct index, every group's key as columns (reserved like the records), which `finish` hands out as
   * they are; records then hold only the keys and counts of the groups the hash table found (`hashedGroups`).
   */
  private keys: { latency: Float64Array; scale: Float64Array; difficulty: Float64Array } | null = null;
  private readonly hashedGroups: number[] = [];
  /** Each row's cell of the direct index in a batch (-1 outside it). */
  private cells = new Int32Array(0);
  /** Rows of a batch that did not qualify for the direct index, gathered for the hash table. */
  private rest: OffGridRows | null = null;
  groups = 0;
  sourceRows = 0;
  /** Sum of the entries the touch loops read (kept so that the loops are not removed as dead code). */
  private touched = 0;

  /**
   * `weight` / `player`: whether rows carry prior weights and player codes (part of the key); `merge`: false keeps every row as its own group;
   * `expectedRows`: about how many rows will come, if known (see {@link RESERVED_GROUPS});
   * `grid`: whether to use the direct index of the class note (default: when rows are merged, carry neither weights nor players,
   * and at least {@link GRID_MIN_ROWS} are expected; it is never used with weights or players);
   * `keepDistinct`: when the first batch of {@link COLLAPSE_BATCH_ROWS} rows, merged through the hash table, merges fewer
   * than {@link MIN_MERGED_SHARE} of its rows, keep every row as it comes (that batch's too), each its own group: the rows
   * are then nearly all distinct (telemetry with latencies to the hundredth of a millisecond), and hashing them would cost
   * about a third of a file's read for a few per cent fewer rows. Databases skip a partial aggregation that does not
   * reduce its input the same way. Exact all the same for what the groups feed (a fit merges rows again as it needs), with
   * more groups.
   */
  constructor(layout: { readonly weight: boolean; readonly player: boolean; readonly merge: boolean; readonly expectedRows?: number; readonly grid?: boolean; readonly keepDistinct?: boolean }) {
    this.hasWeight = layout.weight;
    this.hasPlayer = layout.player;
    this.merge = layout.merge;
    this.undecided = layout.merge && layout.keepDistinct === true;
    this.expectedRows = Math.max(1 << 12, Math.ceil(layout.expectedRows ?? 0));
    this.stride = 5 + (layout.weight ? 1 : 0) + (layout.player ? 1 : 0);
    this.weightAt = 5;
    this.playerAt = layout.weight ? 6 : 5;
    const reserved = Math.min(RESERVED_GROUPS, Math.max(1 << 12, Math.ceil(layout.expectedRows ?? 0)));
    this.records = new Float64Array(this.stride * reserved);
    const plain = layout.merge && !layout.weight && !layout.player;
    if (plain && (layout.grid ?? (layout.expectedRows ?? 0) >= GRID_MIN_ROWS)) {
      this.grid = new Int32Array(GRID_SCALES * GRID_LEVELS * GRID_STEPS);
      this.gridCounts = new Float64Array(2 * reserved);
      this.keys = { latency: new Float64Array(reserved), scale: new Float64Array(reserved), difficulty: new Float64Array(reserved) };
    }
  }

  /**
   * Add the first `count` rows of `columns`, in batches of
   * {@link COLLAPSE_BATCH_ROWS} counted from the first row (a reader that
   * hands over full batches gets the same batches, hence the same group order).
   * `rowGroups`, when given, receives each row's group (its index in what
   * {@link finish} returns).
   */
  addRows(columns: RowColumns, count: number, rowGroups: Int32Array | null = null): void {
    if (count <= COLLAPSE_BATCH_ROWS) return this.addBatch(columns, count, rowGroups);
    for (let start = 0; start < count; start += COLLAPSE_BATCH_ROWS) {
      const end = Math.min(count, start + COLLAPSE_BATCH_ROWS);
      this.addBatch(
        {
          latency: columns.latency.subarray(start, end),
          scale: columns.scale.subarray(start, end),
          difficulty: columns.difficulty.subarray(start, end),
          weight: columns.weight === null ? null : columns.weight.subarray(start, end),
          player: columns.player === null ? null : columns.player.subarray(start, end),
          successes: columns.successes.subarray(start, end),
          attempts: columns.attempts.subarray(start, end),
        },
        end - start,
        rowGroups === null ? null : rowGroups.subarray(start, end),
      );
    }
  }

  /**
   * One batch: the hashes, pass 1 and pass 2 of the class note, each loop a
   * method of its own (a loop that runs once per batch is optimised alone,
   * instead of the whole batch deoptimising where the next loop starts).
   */
  private addBatch(columns: RowColumns, count: number, rowGroups: Int32Array | null): void {
    this.sourceRows += count;
    if (!this.merge) {
      const first = this.groups;
      this.appendAll(columns, count);
      if (rowGroups !== null) for (let i = 0; i < count; i += 1) rowGroups[i] = first + i;
      return;
    }
    if (this.groupOf.length < count) {
      this.groupOf = new Int32Array(Math.max(count, COLLAPSE_BATCH_ROWS));
      if (this.grid !== null) this.cells = new Int32Array(this.groupOf.length);
    }
    let hashed = columns;
    let rest = count;
    if (this.grid !== null) {
      rest = gridCells(columns, count, this.cells, this.scaleCodes);
      this.addGridCounts(columns, count, this.grid);
      // The direct index's rows have their groups now; the others (-1) get theirs below.
      if (rowGroups !== null) rowGroups.set(this.groupOf.subarray(0, count));
      if (rest === 0) return;
      if (rest < count) {
        if (this.rest === null || this.rest.latency.length < rest) this.rest = offGridColumns(Math.max(rest, COLLAPSE_BATCH_ROWS));
        hashed = { ...gatherOffGrid(columns, count, this.groupOf, this.rest), weight: null, player: null };
      }
    }
    this.hashRows(hashed, rest);
    this.assignGroups(hashed, rest);
    this.addCounts(hashed, rest);
    if (this.undecided) {
      // Decided once, on the first batch: a full one, through the hash table. Kept, its rows are
      // kept as they came too (its groups are dropped), so that every row is its own group.
      this.undecided = false;
      if (this.grid === null && count === COLLAPSE_BATCH_ROWS && this.groups > (1 - MIN_MERGED_SHARE) * count) {
        this.merge = false;
        this.groups = 0;
        this.appendAll(columns, count);
        if (rowGroups !== null) for (let i = 0; i < count; i += 1) rowGroups[i] = i;
        return;
      }
    }
    if (rowGroups === null) return;
    const groupOf = this.groupOf;
    if (hashed === columns) rowGroups.set(groupOf.subarray(0, count));
    else for (let i = 0, r = 0; i < count; i += 1) if ((rowGroups[i] as number) < 0) rowGroups[i] = groupOf[r++] as number;
  }

  /**
   * The direct index's pass, in three loops: each qualifying row's cell read into `groupOf` (independent loads, so
   * their cache misses overlap), then a group for every row whose cell was empty (about a third of the rows of a large
   * file start a group, a branch the processor cannot predict, kept out of the loops that miss the cache), then the
   * counts.
   */
  private addGridCounts(columns: RowColumns, count: number, grid: Int32Array): void {
    const { latency, scale, difficulty, successes, attempts } = columns;
    const groupOf = this.groupOf;
    const cells = this.cells;
    readCells(grid, cells, groupOf, count);
    // Room for every row of the batch as a new group, so that the loop writes new keys itself.
    const keys = this.keyRoom(this.groups + count);
    const { latency: keyLatency, scale: keyScale, difficulty: keyDifficulty } = keys;
    let groups = this.groups;
    for (let i = 0; i < count; i += 1) {
      if ((groupOf[i] as number) >= 0) continue;
      const cell = cells[i] as number;
      if (cell < 0) continue;
      // A cell read empty may have been filled by an earlier row of this batch.
      let group = (grid[cell] as number) - 1;
      if (group < 0) {
        group = groups;
        groups += 1;
        grid[cell] = groups;
        keyLatency[group] = latency[i] as number;
        keyScale[group] = scale[i] as number;
        keyDifficulty[group] = difficulty[i] as number;
      }
      groupOf[i] = group;
    }
    this.groups = groups;
    this.gridCounts = withRoom(this.gridCounts, 2 * groups);
    addGroupCounts(this.gridCounts, groupOf, successes, attempts, count);
  }

  /** The key columns, with room for at least `groups` groups (grown by doubling, keeping those held). */
  private keyRoom(groups: number): { latency: Float64Array; scale: Float64Array; difficulty: Float64Array } {
    const keys = this.keys as { latency: Float64Array; scale: Float64Array; difficulty: Float64Array };
    if (groups <= keys.latency.length) return keys;
    this.keys = { latency: withRoom(keys.latency, groups), scale: withRoom(keys.scale, groups), difficulty: withRoom(keys.difficulty, groups) };
    return this.keys;
  }

  /** Every row its own group (rows not merged): copied in bulk into the columns {@link finish} hands out. */
  private appendAll(columns: RowColumns, count: number): void {
    const from = this.groups;
    const kept = this.keptRoom(from + count);
    kept.latency.set(columns.latency.subarray(0, count), from);
    kept.scale.set(columns.scale.subarray(0, count), from);
    kept.difficulty.set(columns.difficulty.subarray(0, count), from);
    kept.successes.set(columns.successes.subarray(0, count), from);
    kept.attempts.set(columns.attempts.subarray(0, count), from);
    if (kept.weight !== null) {
      if (columns.weight === null) kept.weight.fill(1, from, from + count);
      else kept.weight.set(columns.weight.subarray(0, count), from);
    }
    if (kept.player !== null) {
      if (columns.player === null) kept.player.fill(0, from, from + count);
      else kept.player.set(columns.player.subarray(0, count), from);
    }
    this.groups = from + count;
  }

  /**
   * The kept rows' columns with room for `groups` rows: made at the first kept row for the rows
   * expected, grown as the other columns here grow ({@link withRoom}) should more come. Rows are
   * kept from the first row on (see `keepDistinct`), so every group is in them.
   */
  private keptRoom(groups: number): KeptColumns {
    const kept = this.kept;
    if (kept === null) {
      const size = Math.max(groups, this.expectedRows);
      return (this.kept = {
        latency: new Float64Array(size),
        scale: new Float64Array(size),
        difficulty: new Float64Array(size),
        successes: new Float64Array(size),
        attempts: new Float64Array(size),
        weight: this.hasWeight ? new Float64Array(size) : null,
        player: this.hasPlayer ? new Int32Array(size) : null,
      });
    }
    if (groups <= kept.latency.length) return kept;
    return (this.kept = {
      latency: withRoom(kept.latency, groups),
      scale: withRoom(kept.scale, groups),
      difficulty: withRoom(kept.difficulty, groups),
      successes: withRoom(kept.successes, groups),
      attempts: withRoom(kept.attempts, groups),
      weight: kept.weight === null ? null : withRoom(kept.weight, groups),
      player: kept.player === null ? null : withRoom(kept.player, groups),
    });
  }

  /** Each row's 32-bit key hash into `groupOf`. */
  private hashRows(columns: RowColumns, count: number): void {
    const { latency, scale, difficulty } = columns;
    const weights = this.hasWeight ? columns.weight : null;
    const players = this.hasPlayer ? columns.player : null;
    const groupOf = this.groupOf;
    for (let i = 0; i < count; i += 1) {
      let hash = 0x811c9dc5;
      hash = mix(hash, latency[i] as number);
      hash = mix(hash, scale[i] as number);
      hash = mix(hash, difficulty[i] as number);
      if (weights !== null) hash = mix(hash, weights[i] as number);
      if (players !== null) hash = block(hash, players[i] as number);
      groupOf[i] = finalise(hash) | 0;
    }
  }

  /** Pass 1: a group for every row, by its hash (`groupOf` goes from hashes to groups). */
  private assignGroups(columns: RowColumns, count: number): void {
    const groupOf = this.groupOf;
    let table = this.table;
    let capacity = this.capacity;
    this.touched += touchSlots(table, groupOf, count, capacity - 1);
    for (let i = 0; i < count; i += 1) {
      const full = groupOf[i] as number;
      let slot = full & (capacity - 1);
      for (;;) {
        const stored = table[2 * slot] as number;
        if (stored === 0) {
          if (4 * (this.groups + 1) > 3 * capacity) {
            table = rehash(table, capacity);
            capacity *= 2;
            this.table = table;
            this.capacity = capacity;
            slot = full & (capacity - 1);
            while (table[2 * slot] !== 0) slot = (slot + 1) & (capacity - 1);
          }
          const group = this.append(columns, i);
          table[2 * slot] = group + 1;
          table[2 * slot + 1] = full;
          groupOf[i] = group;
          break;
        }
        if (table[2 * slot + 1] === full) {
          groupOf[i] = stored - 1;
          break;
        }
        slot = (slot + 1) & (capacity - 1);
      }
    }
  }

  /** Pass 2: the exact key, then the counts. */
  private addCounts(columns: RowColumns, count: number): void {
    const { successes, attempts } = columns;
    const stride = this.stride;
    const groupOf = this.groupOf;
    this.touched += touchRecords(this.records, groupOf, count, stride);
    for (let i = 0; i < count; i += 1) {
      const first = groupOf[i] as number;
      const group = this.holdsKey(first, columns, i) ? first : this.collidedGroup(columns, i, first);
      // Each row's group, for a caller that asks for them (`addRows`' `rowGroups`).
      groupOf[i] = group;
      const base = group * stride;
      const target = this.records;
      target[base + 3] = (target[base + 3] as number) + (successes[i] as number);
      target[base + 4] = (target[base + 4] as number) + (attempts[i] as number);
    }
  }

  /** Whether `group`'s record holds row `i`'s exact key. */
  private holdsKey(group: number, columns: RowColumns, i: number): boolean {
    const records = this.records;
    const base = group * this.stride;
    return (
      records[base] === columns.latency[i] &&
      records[base + 1] === columns.scale[i] &&
      records[base + 2] === columns.difficulty[i] &&
      (!this.hasWeight || records[base + this.weightAt] === (columns.weight?.[i] ?? 1)) &&
      (!this.hasPlayer || records[base + this.playerAt] === (columns.player?.[i] ?? 0))
    );
  }

  /**
   * The group of row `i`, whose hash matched that of `first` but not its key:
   * the point with its key along `first`'s chain of same-hash points, or a
   * new point at the chain's end.
   */
  private collidedGroup(columns: RowColumns, i: number, first: number): number {
    const chains = (this.sameHash ??= new Map());
    for (let group = first; ; ) {
      const next = chains.get(group);
      if (next === undefined) {
        const created = this.append(columns, i);
        chains.set(group, created);
        return created;
      }
      if (this.holdsKey(next, columns, i)) return next;
      group = next;
    }
  }

  /**
   * Add collapsed groups as rows with their counts (e.g. groups whose keys
   * changed, see {@link mergeGroups}); the source rows they stood for are
   * counted, not the groups.
   */
  addGroups(data: CollapsedTrials): void {
    const before = this.sourceRows;
    this.addRows(data, data.rows);
    this.sourceRows = before + data.sourceRows;
  }

  /** A new group with row `i`'s key and no counts yet. */
  private append(columns: RowColumns, i: number): number {
    const group = this.groups;
    const stride = this.stride;
    const base = group * stride;
    this.records = withRoom(this.records, base + stride);
    const records = this.records;
    records[base] = columns.latency[i] as number;
    records[base + 1] = columns.scale[i] as number;
    records[base + 2] = columns.difficulty[i] as number;
    if (this.hasWeight) records[base + this.weightAt] = columns.weight?.[i] ?? 1;
    if (this.hasPlayer) records[base + this.playerAt] = columns.player?.[i] ?? 0;
    if (this.keys !== null) {
      // With the direct index, the key columns hold every group (see `keys`).
      const keys = this.keyRoom(group + 1);
      keys.latency[group] = records[base] as number;
      keys.scale[group] = records[base + 1] as number;
      keys.difficulty[group] = records[base + 2] as number;
      this.hashedGroups.push(group);
    }
    this.groups = group + 1;
    return group;
  }

  /** Whether rows are kept as they come (no merging from the start, or since the first batch under `keepDistinct`). */
  keepsRows(): boolean {
    return !this.merge;
  }

  /** The groups as columns, in order; `difficultyValue` maps a stored difficulty (a level code) to the value to report. */
  finish(difficultyValue?: (stored: number) => number): CollapsedTrials {
    const layout: RecordLayout = { stride: this.stride, weightAt: this.hasWeight ? this.weightAt : -1, playerAt: this.hasPlayer ? this.playerAt : -1 };
    const collapsed =
      this.kept !== null
        ? columnsFromKept(this.kept, this.groups, this.sourceRows, difficultyValue)
        : this.keys === null
          ? columnsFromRecords(this.records, this.groups, layout, this.sourceRows, difficultyValue)
          : columnsFromKeys(this.keys, this.groups, this.gridCounts, this.hashedGroups, this.records, this.stride, this.sourceRows, difficultyValue);
    this.kept = null;
    this.records = new Float64Array(0);
    this.table = new Int32Array(0);
    this.groupOf = new Int32Array(0);
    this.grid = null;
    this.cells = new Int32Array(0);
    this.gridCounts = new Float64Array(0);
    this.keys = null;
    this.rest = null;
    return collapsed;
  }
}

/**
 * Read each row's record once, in a loop of independent loads and nothing
 * else, so that the processor has many of these cache and TLB misses in
 * flight at a time; pass 2 then finds the records in cache (a software
 * prefetch, which JavaScript lacks). Returns a sum of what it read.
 */
function touchRecords(records: Float64Array, groupOf: Int32Array, count: number, stride: number): number {
  let sum = 0;
  for (let i = 0; i < count; i += 1) sum += records[(groupOf[i] as number) * stride] as number;
  return sum;
}

/** `array` itself when it holds at least `length` entries, else a copy grown by doubling (at least 8,192 entries). */
function withRoom<T extends Float64Array | Int32Array>(array: T, length: number): T {
  if (length <= array.length) return array;
  let size = Math.max(1 << 13, array.length * 2);
  while (size < length) size *= 2;
  const next = new (array.constructor as new (size: number) => T)(size);
  next.set(array);
  return next;
}
