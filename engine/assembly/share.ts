// Work sharing with a helper thread: a second instance of this module on the same shared memory (in a worker)
// runs helperLoop, and a caller may hand it part of a large job. The caller posts the job (its kind and
// arguments) in a control block, does its own part, then joins: if the helper has claimed the job the caller
// waits for it; if not, the caller does the posted part itself. A missing, slow or stopped helper so costs
// nothing but time, and no job is ever lost or done twice.
//
// Control block: i32 words 0 the posted job's number, 1 the last claimed, 2 the last done, 3 stop, 4 jobs the
// helper has done, 5 the posted job's kind; from byte 32, eight 8-byte argument slots.

const control = memory.data(96, 64);
/** Polls of a flag before a thread sleeps on it (a wake-up costs more than the work between two jobs). */
const SPINS = 2000000;
let helperOn = false;

@inline function word(k: i32): usize { return control + (<usize>k << 2); }
@inline function slot(k: i32): usize { return control + 32 + (<usize>k << 3); }

/** Whether jobs are shared with the helper (on once it runs, off to work alone). */
export function useHelper(on: bool): void {
  helperOn = on;
}

/** Whether a helper may take part of a job. */
export function sharing(): bool {
  return helperOn;
}

/** Sets argument slot k of the next job. */
export function setArg(k: i32, value: u64): void { store<u64>(slot(k), value); }
export function setArgF(k: i32, value: f64): void { store<f64>(slot(k), value); }
/** Reads argument slot k of the current job. */
export function arg(k: i32): u64 { return load<u64>(slot(k)); }
export function argF(k: i32): f64 { return load<f64>(slot(k)); }

/** Posts a job of `kind` (its arguments set before) for the helper. */
export function post(kind: i32): void {
  store<i32>(word(5), kind);
  const job = atomic.load<i32>(word(0)) + 1;
  atomic.store<i32>(word(0), job); // publishes the arguments with it
  atomic.notify(word(0), 1);
}

/**
 * After the caller's own part: true when the helper has done the posted part (waited for here), false when it
 * had not claimed it, which the caller must then do itself.
 */
export function join(): bool {
  const job = atomic.load<i32>(word(0));
  if (atomic.cmpxchg<i32>(word(1), job - 1, job) == job - 1) {
    atomic.store<i32>(word(2), job);
    return false;
  }
  let spins = 0;
  while (atomic.load<i32>(word(2)) != job) {
    if (++spins > SPINS) atomic.wait<i32>(word(2), job - 1, 1000000);
  }
  return true;
}

/** The helper's side: the kind of the next job it has claimed, or 0 when told to stop. */
export function awaitJob(): i32 {
  let seen = atomic.load<i32>(word(1));
  while (atomic.load<i32>(word(3)) == 0) {
    let spins = 0;
    while (atomic.load<i32>(word(0)) == seen && atomic.load<i32>(word(3)) == 0) {
      if (++spins > SPINS) atomic.wait<i32>(word(0), seen, 100000000);
    }
    const job = atomic.load<i32>(word(0));
    if (job == seen) continue;
    seen = job;
    // the caller may have taken it back
    if (atomic.cmpxchg<i32>(word(1), job - 1, job) == job - 1) return load<i32>(word(5));
  }
  return 0;
}

/** The helper's side: the claimed job is done. */
export function finishJob(): void {
  const job = atomic.load<i32>(word(1));
  atomic.add<i32>(word(4), 1);
  atomic.store<i32>(word(2), job);
  atomic.notify(word(2), 1);
}

/** Jobs the helper has done since the module was loaded (for tests). */
export function helperJobs(): i32 {
  return atomic.load<i32>(word(4));
}

/** Tells the helper to leave its loop. */
export function stopHelper(): void {
  atomic.store<i32>(word(3), 1);
  atomic.notify(word(0), 1);
}
