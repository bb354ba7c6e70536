import { AsyncLocalStorage } from "node:async_hooks";

/**
 * One write at a time per process, across both SQLite connections (Prisma's and rawDb()).
 *
 * Why: a Prisma interactive transaction begins IMMEDIATE (lib/db/client.ts) and keeps
 * SQLite's write lock across its awaits. A raw-connection write that starts meanwhile
 * cannot get the lock, and better-sqlite3's busy handler then sleeps the whole thread for
 * the busy timeout — the Prisma transaction, which needs that same thread to finish,
 * cannot progress — and the raw write fails with SQLITE_BUSY after 5 s
 * (test/db/write-lock.test.ts reproduces it). So every in-process write transaction first
 * takes this lock, and waits on the event loop instead of in sqlite3_sleep: Prisma
 * transactions through writeTransaction, single Prisma writes through the client's query
 * extension, raw writes through withRawWrite (all in lib/db/client.ts and lib/intake).
 *
 * FIFO: a release hands the lock straight to the oldest waiter, so a steady stream of new
 * writers cannot starve an earlier one. A thrown error (or rejected promise) releases it.
 *
 * Re-entrancy: the holder is kept in an AsyncLocalStorage, so code running inside `fn` —
 * awaited calls and anything they start before `fn` settles — sees that it already holds
 * the lock and runs at once instead of queueing behind itself (which would deadlock).
 * Work left running after `fn` settled (a fire-and-forget promise) no longer counts as
 * the holder: the holder is marked released and such work queues like anyone else.
 *
 * Other processes (CLI import, backup) do not see this lock; against them SQLite's busy
 * timeout still applies, as before.
 *
 * Cost: one promise per uncontended acquisition (microseconds); waiting writers wait for
 * the running transaction only.
 */

/** What the current holder is doing; set by lib/db/client.ts writeTransaction. */
export type WriteHolder = {
  /** false once the holder's fn has settled (see re-entrancy above). */
  active: boolean;
  /** The open Prisma transaction client while the holder runs one, else null. */
  prismaTx: unknown;
};

type LockState = { busy: boolean; waiters: (() => void)[]; storage: AsyncLocalStorage<WriteHolder> };

// On globalThis: Next may load this module more than once (dev reloads, separate bundles
// for instrumentation and routes), and two locks would be no lock.
const globalForLock = globalThis as unknown as { linemixWriteLock?: LockState };
const lock: LockState = (globalForLock.linemixWriteLock ??= { busy: false, waiters: [], storage: new AsyncLocalStorage<WriteHolder>() });

function acquire(): Promise<void> | null {
  if (!lock.busy) {
    lock.busy = true;
    return null;
  }
  return new Promise<void>((resolve) => lock.waiters.push(resolve));
}

function release(): void {
  const next = lock.waiters.shift();
  // Handed over without clearing busy, so nobody can slip in between.
  if (next) next();
  else lock.busy = false;
}

/** The holder whose fn is running in this async context, if any. */
export function currentWriteHolder(): WriteHolder | undefined {
  const holder = lock.storage.getStore();
  return holder?.active ? holder : undefined;
}

/**
 * Runs fn holding the process-wide write lock: waits (FIFO) for any other holder to
 * finish, then runs fn; the lock is released when fn's result settles, thrown or not.
 * Inside a holder's fn it runs fn at once (re-entrant). Cost: O(1) plus the wait.
 *
 * @example
 * await withWriteLock(() => rawDb().transaction(() => insert.run(…)).immediate()); // one floor sheet
 */
export async function withWriteLock<T>(fn: (holder: WriteHolder) => T | Promise<T>): Promise<T> {
  const outer = currentWriteHolder();
  if (outer) return await fn(outer);
  const waiting = acquire();
  if (waiting) await waiting;
  const holder: WriteHolder = { active: true, prismaTx: null };
  try {
    return await lock.storage.run(holder, () => fn(holder));
  } finally {
    holder.active = false;
    release();
  }
}

/**
 * A write on the raw better-sqlite3 connection under the lock. The write itself must be
 * one synchronous transaction (better-sqlite3 transactions cannot span awaits). Refused
 * at once inside an open Prisma transaction: the raw connection would wait for the write
 * lock Prisma's connection holds, stall the thread 5 s and fail with SQLITE_BUSY.
 *
 * @example
 * const outcome = await withRawWrite(() => run.immediate()); // submitOnce in lib/intake/submissions.ts
 */
export function withRawWrite<T>(fn: () => T): Promise<T> {
  return withWriteLock((holder) => {
    if (holder.prismaTx) {
      throw new Error("a raw-connection write cannot run inside a Prisma write transaction (it would wait 5 s for that transaction's lock and fail); write through the transaction client instead");
    }
    return fn();
  });
}

/** Whether the lock is held and how many wait for it, for tests and diagnostics. */
export function writeLockState(): { held: boolean; waiting: number } {
  return { held: lock.busy, waiting: lock.waiters.length };
}
