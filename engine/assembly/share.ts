// Work sharing with a helper thread: a second instance of this module on the same shared memory (in a worker)
// runs helperLoop, and a caller hands out a job over a range of rows (or columns) in blocks. The caller posts
// the job (its kind, range, block size and arguments) in a control block; then both threads claim blocks from
// one counter until none is left, and the caller waits for the blocks the helper holds. A missing, slow or
// descheduled helper so costs nothing but its own blocks' time, and no block is ever lost or done twice.
//
// Control block: i32 words 0 the posted job's number, 1 the block counter (the job's tag << 16 | next block),
// 2 blocks done (tag << 16 | count), 3 stop, 4 blocks the helper has done, 5 kind, 6 lo, 7 hi, 8 block size,
// 9 blocks, 10 the helper failed, 11 the helper has joined; from byte 64, eight 8-byte argument slots.
//
// A helper may join a run already going: its instance is made on the shared memory (which may write this
// module's static data again, the control block's zeros included) before it joins, and the caller posts no job
// before it has joined, so nothing the caller uses is written under it.

const control = memory.data(128, 64);
/** Polls of a flag before a thread sleeps on it (a wake-up costs more than the work between two jobs). */
const SPINS = 2000000;
let helperOn = false;

@inline function word(k: i32): usize { return control + (<usize>k << 2); }
@inline function slot(k: i32): usize { return control + 64 + (<usize>k << 3); }
@inline function tag(job: i32): i32 { return (job & 0xffff) << 16; }

/** Whether jobs may be shared with a helper once one has joined (on when one is started, off to work alone). */
export function useHelper(on: bool): void {
  helperOn = on;
}

/** Whether a helper may take part of a job: it has joined, and has not failed. */
export function sharing(): bool {
  return helperOn && atomic.load<i32>(word(11)) != 0 && atomic.load<i32>(word(10)) == 0;
}

/** The helper's side: it is in its loop, ready for jobs (from now on the caller shares them). */
export function join(): void {
  atomic.store<i32>(word(11), 1);
}

/**
 * Called by the helper's worker when a block failed (a trap): the caller stops waiting for it and the run
 * fails with an engine error (a block was lost: no result can be vouched for); later runs work alone.
 */
export function helperFailed(): void {
  atomic.store<i32>(word(10), 1);
  atomic.notify(word(2), 1);
}

/** Sets argument slot k of the next job. */
export function setArg(k: i32, value: u64): void { store<u64>(slot(k), value); }
export function setArgF(k: i32, value: f64): void { store<f64>(slot(k), value); }
/** Reads argument slot k of the current job. */
export function arg(k: i32): u64 { return load<u64>(slot(k)); }
export function argF(k: i32): f64 { return load<f64>(slot(k)); }

/** A block size for a range of `count` rows: about `parts` blocks, at least `least` rows (a multiple of it). */
export function blockSize(count: i32, parts: i32, least: i32): i32 {
  const size = max(max(least, (count + parts - 1) / parts), (count + 0xfffe) / 0xffff);
  return (size + least - 1) / least * least;
}

/**
 * Posts a job of `kind` over rows lo…hi−1 in blocks of `block` (its arguments set before) and returns its
 * number, for {@link claim} and {@link waitAll}.
 */
export function post(kind: i32, lo: i32, hi: i32, block: i32): i32 {
  const job = atomic.load<i32>(word(0)) + 1;
  // The counter moves to the new job first: a helper still trying to claim from the last job (which has no block
  // left) must fail on the tag, never read the new job's block count against the old counter.
  atomic.store<i32>(word(1), tag(job));
  atomic.store<i32>(word(2), tag(job));
  atomic.store<i32>(word(5), kind);
  atomic.store<i32>(word(6), lo);
  atomic.store<i32>(word(7), hi);
  atomic.store<i32>(word(8), block);
  atomic.store<i32>(word(9), (hi - lo + block - 1) / block);
  atomic.store<i32>(word(0), job); // publishes the job: the helper learns its number only now
  atomic.notify(word(0), 1);
  return job;
}

/** The first row of the next unclaimed block of `job`, or −1 when none is left (or the job is over). */
export function claim(job: i32): i32 {
  let w = atomic.load<i32>(word(1));
  while ((w & 0xffff0000) == tag(job) && (w & 0xffff) < atomic.load<i32>(word(9))) {
    const seen = atomic.cmpxchg<i32>(word(1), w, w + 1);
    if (seen == w) return atomic.load<i32>(word(6)) + (w & 0xffff) * atomic.load<i32>(word(8));
    w = seen;
  }
  return -1;
}

/** The end (exclusive) of the claimed block that starts at `start`. */
export function blockEnd(start: i32): i32 {
  return min(start + atomic.load<i32>(word(8)), atomic.load<i32>(word(7)));
}

/** One claimed block is done. */
export function blockDone(): void {
  atomic.add<i32>(word(2), 1);
}

/**
 * Posts a job of `kind` over rows lo…hi−1 in blocks of `block` (its arguments set before), does blocks on this
 * thread with `work` (a function of the block's rows that reads the job's arguments, as the helper's does) until
 * none is left, and waits for the blocks the helper holds.
 */
export function runShared(kind: i32, lo: i32, hi: i32, block: i32, work: (i0: i32, i1: i32) => void): void {
  const job = post(kind, lo, hi, block);
  for (let s = claim(job); s >= 0; s = claim(job)) {
    work(s, blockEnd(s));
    blockDone();
  }
  waitAll(job);
}

/** The caller's side: waits until every block of `job` is done (those the helper holds). */
export function waitAll(job: i32): void {
  const all = tag(job) | atomic.load<i32>(word(9));
  let spins = 0;
  for (let w = atomic.load<i32>(word(2)); w != all; w = atomic.load<i32>(word(2))) {
    if (atomic.load<i32>(word(10)) != 0) abort("the helper thread failed in the middle of a job");
    if (++spins > SPINS) atomic.wait<i32>(word(2), w, 1000000);
  }
}

/** The helper's side: the number of the next job posted, or 0 when told to stop. */
export function awaitJob(last: i32): i32 {
  let spins = 0;
  while (atomic.load<i32>(word(3)) == 0) {
    const job = atomic.load<i32>(word(0));
    if (job != last) return job;
    if (++spins > SPINS) atomic.wait<i32>(word(0), last, 100000000);
  }
  return 0;
}

/** The number of the last job posted (where the helper starts waiting). */
export function currentJob(): i32 {
  return atomic.load<i32>(word(0));
}

/** The kind of the posted job (read after a successful {@link claim}). */
export function jobKind(): i32 {
  return atomic.load<i32>(word(5));
}

/** The helper's side: counts a block it has done (for tests), after {@link blockDone}. */
export function countHelperBlock(): void {
  atomic.add<i32>(word(4), 1);
}

/** Blocks the helper has done since the module was loaded (for tests). */
export function helperBlocks(): i32 {
  return atomic.load<i32>(word(4));
}

/** Tells the helper to leave its loop. */
export function stopHelper(): void {
  atomic.store<i32>(word(3), 1);
  atomic.notify(word(0), 1);
}
