/** IndexedDB on the phone: the outbox, photos as blobs, and the last-known server data. */
import { openDB, type DBSchema, type IDBPDatabase } from "idb";
import type { Draft, OutRecord, Reason } from "./types";

type OutStatus = "waiting" | "applied" | "rejected";

/** One record made on the phone, kept until the server has answered for it. */
export interface OutboxEntry {
  client_uuid: string;
  record: OutRecord;
  seq: number;
  created_at: string;
  /** Plain words for lists: "Roof anchor pre-use check, anchor R1". */
  label: string;
  job: number;
  /** For sheets: the requirement key it answers and the phone's own verdict. */
  requirement?: string;
  local_verdict?: "pass" | "fail";
  local_failures?: string[];
  status: OutStatus;
  attempts: number;
  errors?: Record<string, unknown>;
  reasons?: Reason[];
  server?: { sheet?: number; verdict?: string; state?: string; duplicate?: boolean };
  answered_at?: string;
  /** A refusal the person dismissed (a later action made it moot): no longer shown as one. */
  dismissed_at?: string;
}

export interface PhotoEntry {
  client_uuid: string;
  job: number;
  sheet_uuid: string;
  item_key: string;
  blob: Blob;
  name: string;
  created_at: string;
  uploaded: boolean;
  error?: string;
}

interface CacheEntry {
  key: string;
  value: unknown;
  saved_at: string;
}

/** A sheet being filled, kept as the operator goes so a reload or a closed tab loses nothing. */
export interface DraftEntry {
  /** `${user}:${job}:${requirement}` */
  key: string;
  job: number;
  requirement: string;
  /** The checklist version the answers were given against; a draft for another version is not restored. */
  version: number;
  sheet_uuid: string;
  draft: Draft;
  remarks: string;
  /** Series items whose timer is running: item key → start time (ms since the epoch). */
  timers: Record<string, number>;
  saved_at: string;
}

interface ParapetDB extends DBSchema {
  outbox: { key: string; value: OutboxEntry; indexes: { by_seq: number; by_status: string } };
  photos: { key: string; value: PhotoEntry; indexes: { by_sheet: string } };
  cache: { key: string; value: CacheEntry };
  meta: { key: string; value: { key: string; value: unknown } };
  drafts: { key: string; value: DraftEntry };
}

let dbPromise: Promise<IDBPDatabase<ParapetDB>> | null = null;

function db(): Promise<IDBPDatabase<ParapetDB>> {
  dbPromise ??= openDB<ParapetDB>("parapet", 2, {
    upgrade(database, oldVersion) {
      if (oldVersion < 1) {
        const outbox = database.createObjectStore("outbox", { keyPath: "client_uuid" });
        outbox.createIndex("by_seq", "seq");
        outbox.createIndex("by_status", "status");
        const photos = database.createObjectStore("photos", { keyPath: "client_uuid" });
        photos.createIndex("by_sheet", "sheet_uuid");
        database.createObjectStore("cache", { keyPath: "key" });
        database.createObjectStore("meta", { keyPath: "key" });
      }
      if (oldVersion < 2) database.createObjectStore("drafts", { keyPath: "key" });
    },
  });
  return dbPromise;
}

export async function cacheGet<T>(key: string): Promise<{ value: T; saved_at: string } | null> {
  const row = await (await db()).get("cache", key);
  return row ? { value: row.value as T, saved_at: row.saved_at } : null;
}

export async function cachePut(key: string, value: unknown): Promise<void> {
  await (await db()).put("cache", { key, value, saved_at: new Date().toISOString() });
}

export async function metaGet<T>(key: string): Promise<T | null> {
  const row = await (await db()).get("meta", key);
  return row ? (row.value as T) : null;
}

export async function metaPut(key: string, value: unknown): Promise<void> {
  await (await db()).put("meta", { key, value });
}

/**
 * Write a record and its photos in one transaction: both are kept, or neither. The sheet's draft,
 * if named, goes in the same transaction, so a saved sheet never leaves a stale draft behind.
 */
export async function addToOutbox(
  entry: Omit<OutboxEntry, "seq" | "status" | "attempts">,
  photos: PhotoEntry[] = [],
  draftKey?: string,
): Promise<OutboxEntry> {
  const database = await db();
  const tx = database.transaction(["outbox", "photos", "meta", "drafts"], "readwrite");
  const counter = ((await tx.objectStore("meta").get("seq"))?.value as number | undefined) ?? 0;
  const full: OutboxEntry = { ...entry, seq: counter + 1, status: "waiting", attempts: 0 };
  await tx.objectStore("meta").put({ key: "seq", value: counter + 1 });
  await tx.objectStore("outbox").add(full);
  for (const photo of photos) await tx.objectStore("photos").add(photo);
  if (draftKey !== undefined) await tx.objectStore("drafts").delete(draftKey);
  await tx.done;
  return full;
}

export async function outboxAll(): Promise<OutboxEntry[]> {
  return (await db()).getAllFromIndex("outbox", "by_seq");
}

export async function outboxWaiting(): Promise<OutboxEntry[]> {
  return (await outboxAll()).filter((e) => e.status === "waiting");
}

export async function outboxPut(entry: OutboxEntry): Promise<void> {
  await (await db()).put("outbox", entry);
}

/** Mark a refused record as dismissed: kept for the outbox's list, no longer a banner. */
export async function outboxDismiss(uuid: string): Promise<void> {
  const database = await db();
  const entry = await database.get("outbox", uuid);
  if (entry?.status === "rejected") await database.put("outbox", { ...entry, dismissed_at: new Date().toISOString() });
}

export async function outboxDelete(uuid: string): Promise<void> {
  await (await db()).delete("outbox", uuid);
}

export async function photosAll(): Promise<PhotoEntry[]> {
  return (await db()).getAll("photos");
}

export async function photoPut(photo: PhotoEntry): Promise<void> {
  await (await db()).put("photos", photo);
}

/** Forget the server data of the signed-out user; the outbox and photos stay for the next sign-in. */
export async function clearCache(): Promise<void> {
  await (await db()).clear("cache");
}

/** A draft is its writer's: restored to them alone (the next person on the phone signs what they
 * save, and another's answers would go on the record under their name). */
export const draftKey = (user: number, job: number, requirement: string) => `${user}:${job}:${requirement}`;

export async function draftGet(key: string): Promise<DraftEntry | null> {
  return (await (await db()).get("drafts", key)) ?? null;
}

export async function draftPut(entry: DraftEntry): Promise<void> {
  await (await db()).put("drafts", entry);
}

export async function draftDelete(key: string): Promise<void> {
  await (await db()).delete("drafts", key);
}
