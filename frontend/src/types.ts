/** Shapes of the Parapet API (/api/v1/) as the phone uses them. */

export type JobState = "planned" | "cleared" | "working" | "held" | "closed";

export interface User {
  id: number;
  username: string;
  name: string;
  role: string;
  organisation: string;
}

export interface JobSummary {
  id: number;
  site: number;
  site_name: string;
  date: string;
  state: JobState;
  supervisor: number;
  supervisor_name: string;
  notes: string;
}

interface Drop {
  id: number;
  label: string;
  robot: number;
  anchor: number;
  safety_anchor: number;
  tether: number;
  safety_line: number;
  hose: number;
  length_m: number;
}

export interface Requirement {
  key: string;
  checklist: string;
  title: string;
  version: number;
  subject_kind: string;
  subject: string;
  anchor: number | null;
  equipment: number | null;
  satisfied: boolean;
  latest_sheet: number | null;
  latest_verdict: string | null;
}

export interface Reason {
  code: string;
  message: string;
  requirement?: string | null;
}

interface Hold {
  id: number;
  requirement: string;
  item_key: string;
  reason: string;
  sheet: number | null;
  opened_at: string;
  cleared_at: string | null;
  cleared_by_sheet: number | null;
}

export interface JobDetail extends JobSummary {
  drops: Drop[];
  requirements: Requirement[];
  blockers: Reason[];
  holds: Hold[];
  cautions: string;
}

export type Source = Record<string, unknown>;

type ItemKind = "tick" | "reading" | "series" | "calc" | "photo" | "note";

export interface ChecklistItem {
  key: string;
  kind: ItemKind;
  label: string;
  reason: string;
  blocking: boolean;
  unit?: string;
  limits?: { min?: Source; max?: Source };
  /** A caution band (a fraction, e.g. 0.2): a passing margin under it shows a caution. */
  caution_below?: Source;
  calc?: string;
  inputs?: Record<string, Source>;
  required?: boolean;
  allow_na?: boolean;
  min_samples?: number;
  /** Older versions: seconds between the readings of a series (no tolerance). */
  interval_s?: number;
  /** Newer versions: a series' timing, each number drawn from a source. */
  schedule?: SeriesScheduleSources;
}

/** Where a timed series' numbers come from, e.g. `{"interval_s": {"profile": "decay_interval_s"}}`. */
interface SeriesScheduleSources {
  interval_s: Source;
  tolerance_s?: Source;
  min_duration_s?: Source;
}

export interface ChecklistVersion {
  id: number;
  checklist: string;
  title: string;
  applies_to: string;
  number: number;
  status: string;
  items: ChecklistItem[];
  content_hash: string;
}

export interface Threshold {
  value: number;
  unit?: string;
  source?: string;
}

export interface Profile {
  key: string;
  name: string;
  thresholds: Record<string, Threshold | number>;
  cautions: string;
}

export interface Equipment {
  id: number;
  kind: string;
  label: string;
  ratings: Record<string, unknown>;
}

export interface Anchor {
  id: number;
  site: number;
  label: string;
  x_m?: number;
  y_m?: number;
  certification: { rated_capacity_kn: number; valid_until: string } | null;
}

export interface Site {
  id: number;
  name: string;
  height_m: number;
  profile: string;
  terrain?: string;
  roof_outline?: number[][];
}

export interface Page<T> {
  count?: number;
  results: T[];
}

export type TickValue = "pass" | "fail" | "na";

export type Entry =
  | { value: TickValue }
  | { value: number; unit: string }
  | { value: number[][]; unit: string }
  | { value: string[] }
  | { value: string };

export interface SheetData {
  job: number;
  version: number;
  anchor: number | null;
  equipment: number | null;
  entries: Record<string, Entry>;
  device_time: string;
  remarks: string;
}

export interface DropLogData {
  drop: number;
  device_time: string;
  note: string;
}

export interface JobActionData {
  job: number;
  action: "start" | "pause" | "close";
  reason: string;
}

export type OutRecord =
  | { type: "sheet"; client_uuid: string; data: SheetData }
  | { type: "drop_log"; client_uuid: string; data: DropLogData }
  | { type: "job_action"; client_uuid: string; data: JobActionData };

export interface SyncResultLine {
  client_uuid: string | null;
  status: "applied" | "rejected";
  duplicate?: boolean;
  errors?: Record<string, unknown>;
  sheet?: number;
  verdict?: string;
  job?: number;
  state?: JobState;
  reasons?: Reason[];
}

export interface SyncResponse {
  results: SyncResultLine[];
  jobs: { id: number; state: JobState; date: string }[];
  server_time: string;
}


export type Meaning = "reviewed_safe" | "reviewed_stopped" | "reviewed_exceptions";

/** A sealed, signed daily record (GET /api/v1/records/). `meaning` is the full text signed. */
export interface DailyRecord {
  id: number;
  kind: string;
  site: number;
  job: number;
  date: string;
  sequence: number;
  previous_seal: string;
  seal: string;
  signer_name: string;
  signer_role: string;
  meaning: string;
  signed_at: string;
  pdf_ready: boolean;
}

/* Shapes the phone keeps for itself (not the server's). */

/** What a sheet form holds before it becomes entries. */
export interface Draft {
  ticks: Record<string, TickValue>;
  readings: Record<string, string>;
  series: Record<string, number[][]>;
  photos: Record<string, { uuid: string; blob: Blob; name: string }[]>;
  notes: Record<string, string>;
}

/** Ratings, profiles and anchors the phone needs to judge readings before the server does. */
export interface Reference {
  profiles: Profile[];
  equipment: Equipment[];
  anchors: Anchor[];
  sites: Site[];
}
