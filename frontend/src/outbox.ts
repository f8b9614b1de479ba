/** Making outbox records: each gets its client uuid once, here, and keeps it for every retry. */
import { dataChanged } from "./status";
import { addToOutbox, type OutboxEntry, type PhotoEntry } from "./storage";
import { refreshCounts, requestSync } from "./sync";
import type { DropLogData, JobActionData, OutRecord, SheetData } from "./types";
import { newUuid } from "./uuid";

type Payload =
  | { type: "sheet"; data: SheetData }
  | { type: "drop_log"; data: DropLogData }
  | { type: "job_action"; data: JobActionData };

export interface Describe {
  label: string;
  job: number;
  requirement?: string;
  local_verdict?: "pass" | "fail";
  local_failures?: string[];
}

/**
 * Keep the record (and its photos) on the phone first, then try to send it. `draft` names the
 * sheet draft the record replaces; it is removed in the same write.
 */
export async function enqueue(
  payload: Payload,
  describe: Describe,
  options: { uuid?: string; photos?: PhotoEntry[]; draft?: string } = {},
): Promise<OutboxEntry> {
  const client_uuid = options.uuid ?? newUuid();
  const record = { ...payload, client_uuid } as OutRecord;
  const entry = await addToOutbox(
    { client_uuid, record, created_at: new Date().toISOString(), ...describe },
    options.photos ?? [],
    options.draft,
  );
  await refreshCounts();
  dataChanged();
  void requestSync();
  return entry;
}
