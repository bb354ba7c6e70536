/**
 * The floor sheet's outbox (browser only). A submitted sheet is written to localStorage
 * with its idempotency key before it is sent, and stays there until the server
 * acknowledges it (201 stored, 200 replay) or refuses it (4xx). Network failures and
 * server errors are retried with exponential backoff and at once when the browser
 * comes back online; because every retry carries the same key, a sheet is never
 * counted twice. Sheets left from a closed tab are sent when /entry opens again.
 */

export type SheetPayload = {
  idempotencyKey: string;
  date: string;
  shift: string;
  line: string;
  product: string | null;
  note: string | null;
  units: number | null;
  counts: { category: string; count: number }[];
  mode: "new" | "add" | "correct";
  reason: string | null;
  basis: string;
};

export type OutboxItem = {
  key: string;
  sheetId: string;
  label: string;
  payload: SheetPayload;
  createdAt: number;
  attempts: number;
  nextAttemptAt: number | null;
  lastError: string | null;
  /** Waiting for the person to sign in again (401); sent on the next page load. */
  needsSignIn: boolean;
};

export type SheetResult = {
  stored: { tallies: number; inspections: number; corrections: number };
  totals: { defects: number; units: number };
  sheet: { defects: number; units: number; counts: Record<string, number> };
  replay: boolean;
};

export type OutboxEvent =
  | { type: "acknowledged"; item: OutboxItem; result: SheetResult }
  | { type: "refused"; item: OutboxItem; status: number; code: string | null; message: string; messages: string[] }
  | { type: "changed" };

const STORE_KEY = "linemix.pending-sheets.v1";
export const RETRY_BASE_MS = 2_000;
export const RETRY_MAX_MS = 60_000;

export function sheetId(date: string, shift: string, line: string): string {
  return `${date}|${shift}|${line}`;
}

/** A v4 UUID; crypto.randomUUID needs a secure context, which a plain-HTTP plant LAN is not. */
export function newIdempotencyKey(): string {
  if (typeof crypto !== "undefined" && typeof crypto.randomUUID === "function") {
    try {
      return crypto.randomUUID();
    } catch {
      // fall through
    }
  }
  const b = new Uint8Array(16);
  crypto.getRandomValues(b);
  b[6] = (b[6] & 0x0f) | 0x40;
  b[8] = (b[8] & 0x3f) | 0x80;
  const h = Array.from(b, (x) => x.toString(16).padStart(2, "0")).join("");
  return `${h.slice(0, 8)}-${h.slice(8, 12)}-${h.slice(12, 16)}-${h.slice(16, 20)}-${h.slice(20)}`;
}

export function retryDelay(attempts: number): number {
  const base = Math.min(RETRY_MAX_MS, RETRY_BASE_MS * 2 ** Math.max(0, attempts - 1));
  return Math.round(base * (0.85 + Math.random() * 0.3));
}

let memory: OutboxItem[] = [];
let storageWorks = true;

/** localStorage is the record; memory keeps the page working when storage is unavailable. */
function items(): OutboxItem[] {
  if (storageWorks) {
    try {
      const raw = localStorage.getItem(STORE_KEY);
      const parsed = raw ? (JSON.parse(raw) as unknown) : [];
      memory = Array.isArray(parsed) ? (parsed as OutboxItem[]) : [];
    } catch {
      storageWorks = false;
    }
  }
  return memory;
}

function write(next: OutboxItem[]): void {
  memory = next;
  if (!storageWorks) return;
  try {
    localStorage.setItem(STORE_KEY, JSON.stringify(next));
  } catch {
    storageWorks = false;
  }
}

const listeners = new Set<(event: OutboxEvent) => void>();
let sending = false;
let timer: ReturnType<typeof setTimeout> | null = null;
let started = false;

function save(next: OutboxItem[]): void {
  write(next);
  emit({ type: "changed" });
}

function emit(event: OutboxEvent): void {
  for (const l of listeners) l(event);
}

export function pendingItems(): OutboxItem[] {
  return typeof window === "undefined" ? [] : items();
}

export function subscribe(listener: (event: OutboxEvent) => void): () => void {
  listeners.add(listener);
  return () => listeners.delete(listener);
}

/** Starts the outbox once per page: sends what is left, listens for `online`. */
export function startOutbox(): void {
  if (started || typeof window === "undefined") return;
  started = true;
  window.addEventListener("online", () => void flush(true));
  save(items().map((i) => ({ ...i, needsSignIn: false, nextAttemptAt: null })));
  void flush(true);
}

export function enqueue(item: Omit<OutboxItem, "attempts" | "nextAttemptAt" | "lastError" | "needsSignIn" | "createdAt">): void {
  save([...items(), { ...item, createdAt: Date.now(), attempts: 0, nextAttemptAt: null, lastError: null, needsSignIn: false }]);
  void flush(true);
}

function schedule(): void {
  if (timer) clearTimeout(timer);
  timer = null;
  const next = items()
    .filter((i) => i.nextAttemptAt !== null && !i.needsSignIn)
    .map((i) => i.nextAttemptAt as number)
    .sort((a, b) => a - b)[0];
  if (next !== undefined) timer = setTimeout(() => void flush(false), Math.max(0, next - Date.now()));
}

/** Sends every pending sheet whose time has come (all of them when `now`), oldest first. */
export async function flush(now: boolean): Promise<void> {
  if (sending) {
    flushAgain = flushAgain || now;
    return;
  }
  sending = true;
  try {
    const tried = new Set<string>();
    for (;;) {
      const due = items().find(
        (i) => !tried.has(i.key) && !i.needsSignIn && (now || i.nextAttemptAt === null || i.nextAttemptAt <= Date.now()),
      );
      if (!due) break;
      tried.add(due.key);
      await sendOne(due);
    }
  } finally {
    sending = false;
    schedule();
  }
  if (flushAgain) {
    flushAgain = false;
    await flush(true);
  }
}
let flushAgain = false;

function update(key: string, change: Partial<OutboxItem>): OutboxItem | null {
  let found: OutboxItem | null = null;
  save(
    items().map((i) => {
      if (i.key !== key) return i;
      found = { ...i, ...change };
      return found;
    }),
  );
  return found;
}

function remove(key: string): void {
  save(items().filter((i) => i.key !== key));
}

async function sendOne(item: OutboxItem): Promise<void> {
  const attempts = item.attempts + 1;
  update(item.key, { attempts, lastError: null, nextAttemptAt: null });
  let response: Response;
  try {
    response = await fetch("/api/v1/floor-sheets", {
      method: "POST",
      credentials: "same-origin",
      headers: { "content-type": "application/json", "idempotency-key": item.key },
      body: JSON.stringify(item.payload),
    });
  } catch {
    update(item.key, { lastError: "No connection to the server.", nextAttemptAt: Date.now() + retryDelay(attempts) });
    return;
  }
  let body: Record<string, unknown> = {};
  try {
    body = (await response.json()) as Record<string, unknown>;
  } catch {
    body = {};
  }
  if (response.status === 200 || response.status === 201) {
    remove(item.key);
    emit({ type: "acknowledged", item: { ...item, attempts }, result: body as unknown as SheetResult });
    return;
  }
  if (response.status === 401) {
    update(item.key, { needsSignIn: true, lastError: "Your sign-in has ended." });
    return;
  }
  if (response.status >= 500 || response.status === 408 || response.status === 429) {
    // A 503 from a full, read-only or busy database carries a plain message and Retry-After.
    const said = response.status === 503 && typeof body.error === "string" ? body.error : null;
    const retryAfterMs = Math.min(RETRY_MAX_MS, Number(response.headers.get("retry-after")) * 1000 || 0);
    update(item.key, {
      lastError: said ?? `The server could not take it (HTTP ${response.status}).`,
      nextAttemptAt: Date.now() + Math.max(retryAfterMs, retryDelay(attempts)),
    });
    return;
  }
  // 400, 403, 409, 413: refused; nothing was stored under this key.
  remove(item.key);
  emit({
    type: "refused",
    item: { ...item, attempts },
    status: response.status,
    code: typeof body.code === "string" ? body.code : null,
    message: typeof body.error === "string" ? body.error : `Refused (HTTP ${response.status}).`,
    messages: Array.isArray(body.messages) ? (body.messages as string[]) : [],
  });
}

/** Drops a pending sheet (the person decided not to send it). */
export function discard(key: string): void {
  remove(key);
}
