import { createStore, get, update } from "idb-keyval";

// Entries made on a station tablet are saved here (IndexedDB) before they are sent, and sent in
// order when the network allows: nothing the cook saw as saved is lost, and the server's client-id
// check means nothing is doubled by a retry.

export type OutboxEntry = {
  clientId: string;
  batchId: string;
  savedAt: number;
  body: {
    clientId: string;
    value: number;
    unit: "F" | "C";
    takenAt: string;
    /** When the cook saved it: the attribution is checked against this moment. */
    enteredAt: string;
    probe?: string;
    kind: "reading" | "reheat";
    attribution: string;
    photoId?: string;
    corrects?: { readingId: string; reason: string };
  };
  photo?: Blob;
};

export type Rejection = { entry: OutboxEntry; status: number; errors: Record<string, string> };
export type FlushResult = { rejected: Rejection[]; warnings: Map<string, string[]> };

const KEY = "entries";
let store: ReturnType<typeof createStore> | null = null;
const db = () => (store ??= createStore("chillwright-outbox", "outbox"));
const listeners = new Set<() => void>();

export async function listOutbox(): Promise<OutboxEntry[]> {
  return (await get<OutboxEntry[]>(KEY, db())) ?? [];
}

/** Every change is one read-modify-write transaction, so a background send never overwrites a new save. */
async function change(fn: (entries: OutboxEntry[]) => OutboxEntry[]) {
  await update<OutboxEntry[]>(KEY, (old) => fn(old ?? []), db());
  for (const l of listeners) l();
}

export function onOutboxChange(listener: () => void) {
  listeners.add(listener);
  return () => listeners.delete(listener);
}

export async function saveToOutbox(entry: OutboxEntry) {
  await change((all) => (all.some((e) => e.clientId === entry.clientId) ? all : [...all, entry]));
}

async function replace(entry: OutboxEntry) {
  await change((all) => all.map((e) => (e.clientId === entry.clientId ? entry : e)));
}

async function remove(clientId: string) {
  await change((all) => all.filter((e) => e.clientId !== clientId));
}

let flushing: Promise<FlushResult> | null = null;

/** Sends what is waiting, oldest first; stops at the first network failure and keeps the rest. */
export function flushOutbox(): Promise<FlushResult> {
  flushing ??= (async () => {
    const rejected: Rejection[] = [];
    const warnings = new Map<string, string[]>();
    try {
      for (const entry of await listOutbox()) {
        try {
          if (entry.photo && !entry.body.photoId) {
            const form = new FormData();
            form.set("photo", entry.photo, "probe.jpg");
            form.set("attribution", entry.body.attribution);
            form.set("takenAt", entry.body.takenAt);
            form.set("enteredAt", entry.body.enteredAt);
            const res = await fetch("/station/photos", { method: "POST", body: form });
            if (res.ok) {
              entry.body.photoId = ((await res.json()) as { id: string }).id;
              await replace(entry);
            } else if (res.status >= 400 && res.status < 500) {
              // A photo the server cannot use does not hold the reading back.
              entry.photo = undefined;
              await replace(entry);
            } else break;
          }
          const res = await fetch(`/station/batches/${entry.batchId}/readings`, {
            method: "POST",
            headers: { "content-type": "application/json" },
            body: JSON.stringify(entry.body),
          });
          if (res.ok) {
            const body = (await res.json().catch(() => ({}))) as { warnings?: string[] };
            if (body.warnings?.length) warnings.set(entry.clientId, body.warnings);
            await remove(entry.clientId);
          } else if (res.status === 408 || res.status === 429) {
            break; // the server is busy: try again later, in the same order
          } else if (res.status >= 400 && res.status < 500) {
            const body = (await res.json().catch(() => ({}))) as { errors?: Record<string, string>; error?: string };
            rejected.push({ entry, status: res.status, errors: body.errors ?? { request: body.error ?? `refused (${res.status})` } });
            await remove(entry.clientId);
          } else break;
        } catch {
          break; // offline: try again later, in the same order
        }
      }
    } finally {
      flushing = null;
    }
    return { rejected, warnings };
  })();
  return flushing;
}
