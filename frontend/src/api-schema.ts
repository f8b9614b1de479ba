/**
 * Generated from the server's OpenAPI schema (manage.py spectacular) by scripts/api-types.mjs
 * with openapi-typescript: do not edit. After changing the API run `npm run api-types` in
 * frontend/; make test fails while this file and the schema disagree. The phone's own names for
 * these shapes are in types.ts.
 */

export interface paths {
    "/api/v1/anchor-log/": {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        get: operations["v1_anchor_log_list"];
        put?: never;
        post: operations["v1_anchor_log_create"];
        delete?: never;
        options?: never;
        head?: never;
        patch?: never;
        trace?: never;
    };
    "/api/v1/anchor-log/{id}/": {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        get: operations["v1_anchor_log_retrieve"];
        put?: never;
        post?: never;
        delete?: never;
        options?: never;
        head?: never;
        patch?: never;
        trace?: never;
    };
    "/api/v1/anchor-log/pdf/": {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        get: operations["v1_anchor_log_pdf_retrieve"];
        put?: never;
        post?: never;
        delete?: never;
        options?: never;
        head?: never;
        patch?: never;
        trace?: never;
    };
    "/api/v1/anchors/": {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        get: operations["v1_anchors_list"];
        put?: never;
        post: operations["v1_anchors_create"];
        delete?: never;
        options?: never;
        head?: never;
        patch?: never;
        trace?: never;
    };
    "/api/v1/anchors/{id}/": {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        get: operations["v1_anchors_retrieve"];
        put?: never;
        post?: never;
        delete?: never;
        options?: never;
        head?: never;
        patch?: never;
        trace?: never;
    };
    "/api/v1/anchors/{id}/certifications/": {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        get: operations["v1_anchors_certifications_list"];
        put?: never;
        post: operations["v1_anchors_certifications_create"];
        delete?: never;
        options?: never;
        head?: never;
        patch?: never;
        trace?: never;
    };
    "/api/v1/anchors/{id}/certifications/{cert_pk}/file/": {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        get: operations["v1_anchors_certifications_file_retrieve"];
        put?: never;
        post?: never;
        delete?: never;
        options?: never;
        head?: never;
        patch?: never;
        trace?: never;
    };
    "/api/v1/auth/login/": {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        get?: never;
        put?: never;
        post: operations["v1_auth_login_create"];
        delete?: never;
        options?: never;
        head?: never;
        patch?: never;
        trace?: never;
    };
    "/api/v1/auth/logout/": {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        get?: never;
        put?: never;
        post: operations["v1_auth_logout_create"];
        delete?: never;
        options?: never;
        head?: never;
        patch?: never;
        trace?: never;
    };
    "/api/v1/auth/token/": {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        get?: never;
        put?: never;
        post: operations["v1_auth_token_create"];
        delete?: never;
        options?: never;
        head?: never;
        patch?: never;
        trace?: never;
    };
    "/api/v1/calc/{name}/": {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        get?: never;
        put?: never;
        post: operations["v1_calc_create"];
        delete?: never;
        options?: never;
        head?: never;
        patch?: never;
        trace?: never;
    };
    "/api/v1/checklist-versions/": {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        get: operations["v1_checklist_versions_list"];
        put?: never;
        post?: never;
        delete?: never;
        options?: never;
        head?: never;
        patch?: never;
        trace?: never;
    };
    "/api/v1/checklist-versions/{id}/": {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        get: operations["v1_checklist_versions_retrieve"];
        put?: never;
        post?: never;
        delete?: never;
        options?: never;
        head?: never;
        patch: operations["v1_checklist_versions_partial_update"];
        trace?: never;
    };
    "/api/v1/checklist-versions/{id}/diff/": {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        get: operations["v1_checklist_versions_diff_retrieve"];
        put?: never;
        post?: never;
        delete?: never;
        options?: never;
        head?: never;
        patch?: never;
        trace?: never;
    };
    "/api/v1/checklist-versions/{id}/publish/": {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        get?: never;
        put?: never;
        post: operations["v1_checklist_versions_publish_create"];
        delete?: never;
        options?: never;
        head?: never;
        patch?: never;
        trace?: never;
    };
    "/api/v1/checklists/": {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        get: operations["v1_checklists_list"];
        put?: never;
        post: operations["v1_checklists_create"];
        delete?: never;
        options?: never;
        head?: never;
        patch?: never;
        trace?: never;
    };
    "/api/v1/checklists/{id}/": {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        get: operations["v1_checklists_retrieve"];
        put?: never;
        post?: never;
        delete?: never;
        options?: never;
        head?: never;
        patch?: never;
        trace?: never;
    };
    "/api/v1/checklists/{id}/versions/": {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        get?: never;
        put?: never;
        post: operations["v1_checklists_versions_create"];
        delete?: never;
        options?: never;
        head?: never;
        patch?: never;
        trace?: never;
    };
    "/api/v1/due/": {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        get: operations["v1_due_retrieve"];
        put?: never;
        post?: never;
        delete?: never;
        options?: never;
        head?: never;
        patch?: never;
        trace?: never;
    };
    "/api/v1/equipment/": {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        get: operations["v1_equipment_list"];
        put?: never;
        post: operations["v1_equipment_create"];
        delete?: never;
        options?: never;
        head?: never;
        patch?: never;
        trace?: never;
    };
    "/api/v1/equipment/{id}/": {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        get: operations["v1_equipment_retrieve"];
        put?: never;
        post?: never;
        delete?: never;
        options?: never;
        head?: never;
        patch: operations["v1_equipment_partial_update"];
        trace?: never;
    };
    "/api/v1/equipment/kinds/": {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        get: operations["v1_equipment_kinds_list"];
        put?: never;
        post?: never;
        delete?: never;
        options?: never;
        head?: never;
        patch?: never;
        trace?: never;
    };
    "/api/v1/jobs/": {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        get: operations["v1_jobs_list"];
        put?: never;
        post: operations["v1_jobs_create"];
        delete?: never;
        options?: never;
        head?: never;
        patch?: never;
        trace?: never;
    };
    "/api/v1/jobs/{id}/": {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        get: operations["v1_jobs_retrieve"];
        put?: never;
        post?: never;
        delete?: never;
        options?: never;
        head?: never;
        patch?: never;
        trace?: never;
    };
    "/api/v1/jobs/{id}/close/": {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        get?: never;
        put?: never;
        post: operations["v1_jobs_close_create"];
        delete?: never;
        options?: never;
        head?: never;
        patch?: never;
        trace?: never;
    };
    "/api/v1/jobs/{id}/drops/": {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        get?: never;
        put?: never;
        post: operations["v1_jobs_drops_create"];
        delete?: never;
        options?: never;
        head?: never;
        patch?: never;
        trace?: never;
    };
    "/api/v1/jobs/{id}/pause/": {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        get?: never;
        put?: never;
        post: operations["v1_jobs_pause_create"];
        delete?: never;
        options?: never;
        head?: never;
        patch?: never;
        trace?: never;
    };
    "/api/v1/jobs/{id}/plan-check/": {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        get?: never;
        put?: never;
        post: operations["v1_jobs_plan_check_create"];
        delete?: never;
        options?: never;
        head?: never;
        patch?: never;
        trace?: never;
    };
    "/api/v1/jobs/{id}/sign/": {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        get?: never;
        put?: never;
        post: operations["v1_jobs_sign_create"];
        delete?: never;
        options?: never;
        head?: never;
        patch?: never;
        trace?: never;
    };
    "/api/v1/jobs/{id}/start/": {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        get?: never;
        put?: never;
        post: operations["v1_jobs_start_create"];
        delete?: never;
        options?: never;
        head?: never;
        patch?: never;
        trace?: never;
    };
    "/api/v1/jobs/{id}/transitions/": {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        get: operations["v1_jobs_transitions_list"];
        put?: never;
        post?: never;
        delete?: never;
        options?: never;
        head?: never;
        patch?: never;
        trace?: never;
    };
    "/api/v1/me/": {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        get: operations["v1_me_retrieve"];
        put?: never;
        post?: never;
        delete?: never;
        options?: never;
        head?: never;
        patch?: never;
        trace?: never;
    };
    "/api/v1/me/calendar/": {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        get: operations["v1_me_calendar_retrieve"];
        put?: never;
        post: operations["v1_me_calendar_create"];
        delete: operations["v1_me_calendar_destroy"];
        options?: never;
        head?: never;
        patch?: never;
        trace?: never;
    };
    "/api/v1/photos/": {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        get?: never;
        put?: never;
        post: operations["v1_photos_create"];
        delete?: never;
        options?: never;
        head?: never;
        patch?: never;
        trace?: never;
    };
    "/api/v1/profiles/": {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        get: operations["v1_profiles_list"];
        put?: never;
        post?: never;
        delete?: never;
        options?: never;
        head?: never;
        patch?: never;
        trace?: never;
    };
    "/api/v1/profiles/{key}/": {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        get: operations["v1_profiles_retrieve"];
        put?: never;
        post?: never;
        delete?: never;
        options?: never;
        head?: never;
        patch?: never;
        trace?: never;
    };
    "/api/v1/profiles/{key}/revisions/": {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        get: operations["v1_profiles_revisions_retrieve"];
        put?: never;
        post?: never;
        delete?: never;
        options?: never;
        head?: never;
        patch?: never;
        trace?: never;
    };
    "/api/v1/records/": {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        get: operations["v1_records_list"];
        put?: never;
        post?: never;
        delete?: never;
        options?: never;
        head?: never;
        patch?: never;
        trace?: never;
    };
    "/api/v1/records/{id}/": {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        get: operations["v1_records_retrieve"];
        put?: never;
        post?: never;
        delete?: never;
        options?: never;
        head?: never;
        patch?: never;
        trace?: never;
    };
    "/api/v1/records/{id}/addenda/": {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        get?: never;
        put?: never;
        post: operations["v1_records_addenda_create"];
        delete?: never;
        options?: never;
        head?: never;
        patch?: never;
        trace?: never;
    };
    "/api/v1/records/{id}/pdf/": {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        get: operations["v1_records_pdf_retrieve"];
        put?: never;
        post?: never;
        delete?: never;
        options?: never;
        head?: never;
        patch?: never;
        trace?: never;
    };
    "/api/v1/records/{id}/verify/": {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        get: operations["v1_records_verify_retrieve"];
        put?: never;
        post?: never;
        delete?: never;
        options?: never;
        head?: never;
        patch?: never;
        trace?: never;
    };
    "/api/v1/records/export/": {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        get: operations["v1_records_export_retrieve"];
        put?: never;
        post?: never;
        delete?: never;
        options?: never;
        head?: never;
        patch?: never;
        trace?: never;
    };
    "/api/v1/sheets/": {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        get: operations["v1_sheets_list"];
        put?: never;
        post: operations["v1_sheets_create"];
        delete?: never;
        options?: never;
        head?: never;
        patch?: never;
        trace?: never;
    };
    "/api/v1/sheets/{id}/": {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        get: operations["v1_sheets_retrieve"];
        put?: never;
        post?: never;
        delete?: never;
        options?: never;
        head?: never;
        patch?: never;
        trace?: never;
    };
    "/api/v1/sites/": {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        get: operations["v1_sites_list"];
        put?: never;
        post: operations["v1_sites_create"];
        delete?: never;
        options?: never;
        head?: never;
        patch?: never;
        trace?: never;
    };
    "/api/v1/sites/{id}/": {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        get: operations["v1_sites_retrieve"];
        put?: never;
        post?: never;
        delete?: never;
        options?: never;
        head?: never;
        patch?: never;
        trace?: never;
    };
    "/api/v1/sites/{id}/grants/": {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        get: operations["v1_sites_grants_list"];
        put?: never;
        post: operations["v1_sites_grants_create"];
        delete?: never;
        options?: never;
        head?: never;
        patch?: never;
        trace?: never;
    };
    "/api/v1/sites/{id}/grants/{grant_pk}/end/": {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        get?: never;
        put?: never;
        post: operations["v1_sites_grants_end_create"];
        delete?: never;
        options?: never;
        head?: never;
        patch?: never;
        trace?: never;
    };
    "/api/v1/sync/": {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        get?: never;
        put?: never;
        post: operations["v1_sync_create"];
        delete?: never;
        options?: never;
        head?: never;
        patch?: never;
        trace?: never;
    };
    "/api/v1/verify/": {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        get?: never;
        put?: never;
        post: operations["v1_verify_create"];
        delete?: never;
        options?: never;
        head?: never;
        patch?: never;
        trace?: never;
    };
}
export type webhooks = Record<string, never>;
export interface components {
    schemas: {
        AddendumInputRequest: {
            password: string;
            text: string;
            /** Format: uuid */
            client_uuid?: string;
        };
        Anchor: {
            readonly id: number;
            site: number;
            label: string;
            /** Format: double */
            x_m?: number;
            /** Format: double */
            y_m?: number;
            description?: string;
            readonly certification: {
                [key: string]: unknown;
            } | null;
        };
        AnchorRequest: {
            site: number;
            label: string;
            /** Format: double */
            x_m?: number;
            /** Format: double */
            y_m?: number;
            description?: string;
        };
        CalcInputRequest: {
            /** Format: double */
            vacuum_kpa?: number;
        };
        CalcResult: {
            verdict: string;
        };
        CalendarAddress: {
            /** Format: uri */
            url: string;
        };
        CalendarState: {
            live: boolean;
            /** Format: date-time */
            created_at: string | null;
        };
        Certification: {
            readonly id: number;
            certifier: string;
            certifier_company?: string;
            /** Format: double */
            rated_capacity_kn: number;
            /** Format: date */
            certified_on: string;
            /** Format: date */
            valid_until: string;
            readonly document_url: string | null;
            readonly document_sha256: string;
            readonly recorded_by: string;
            /** Format: date-time */
            readonly recorded_at: string;
        };
        CertificationRequest: {
            certifier: string;
            certifier_company?: string;
            /** Format: double */
            rated_capacity_kn: number;
            /** Format: date */
            certified_on: string;
            /** Format: date */
            valid_until: string;
            /** Format: binary */
            document?: string;
        };
        Check: {
            name: string;
            ok: boolean;
            detail: string;
        };
        Checklist: {
            readonly id: number;
            key: string;
            title: string;
            applies_to: components["schemas"]["SubjectKindEnum"];
            description?: string;
            readonly default: boolean;
            readonly versions: {
                [key: string]: unknown;
            }[];
        };
        ChecklistRequest: {
            key: string;
            title: string;
            applies_to: components["schemas"]["SubjectKindEnum"];
            description?: string;
        };
        ChecklistVersion: {
            readonly id: number;
            readonly checklist: string;
            readonly checklist_id: number;
            readonly default: boolean;
            readonly title: string;
            readonly applies_to: string;
            readonly number: number;
            readonly status: components["schemas"]["ChecklistVersionStatusEnum"];
            items: unknown;
            notes?: string;
            readonly content_hash: string;
            /** Format: date-time */
            readonly created_at: string;
            /** Format: date-time */
            readonly published_at: string | null;
        };
        ChecklistVersionRequest: {
            items: unknown;
            notes?: string;
        };
        /** @enum {string} */
        ChecklistVersionStatusEnum: "draft" | "published";
        Conflict: {
            field: string;
            code: string;
            message: string;
            refuses: boolean;
        };
        Drop: {
            readonly id: number;
            label: string;
            robot: number;
            anchor: number;
            safety_anchor: number;
            tether: number;
            safety_line: number;
            hose: number;
            /** Format: double */
            length_m: number;
        };
        DropRequest: {
            label: string;
            robot: number;
            anchor: number;
            safety_anchor: number;
            tether: number;
            safety_line: number;
            hose: number;
            /** Format: double */
            length_m: number;
        };
        DueItem: {
            kind: components["schemas"]["DueItemKindEnum"];
            uid: string;
            subject: string;
            /** Format: date */
            due_on: string;
            days_left: number;
            state: string;
            site: number | null;
            anchor: number | null;
            equipment: number | null;
            job: number | null;
        };
        /** @enum {string} */
        DueItemKindEnum: "anchor_certificate" | "equipment_inspection" | "unsigned_day";
        DueList: {
            /** Format: date */
            today: string;
            within_days: number;
            items: components["schemas"]["DueItem"][];
            caution: string;
        };
        EndGrantInputRequest: {
            reason?: string;
        };
        EndedGrant: {
            readonly id: number;
            readonly site: number;
            contractor: number;
            readonly contractor_name: string;
            /** Format: date */
            starts_on: string;
            /** Format: date */
            ends_on: string;
            /** Format: date-time */
            readonly granted_at: string;
            /** Format: date-time */
            readonly ended_at: string;
            readonly ended_reason: string;
            readonly work_stopped: number;
        };
        Equipment: {
            readonly id: number;
            kind: components["schemas"]["EquipmentKindEnum"];
            label: string;
            serial?: string;
            ratings?: unknown;
            /** Format: date */
            made_on?: string | null;
            /** Format: date */
            next_inspection_due?: string | null;
            in_service?: boolean;
            readonly out_of_service_reason: string | null;
            /** Format: date */
            readonly out_of_service_since: string | null;
        };
        EquipmentKind: {
            kind: string;
            label: string;
            ratings: components["schemas"]["RatingField"][];
        };
        /** @enum {string} */
        EquipmentKindEnum: "robot" | "tether" | "safety_line" | "hose" | "estop";
        EquipmentRequest: {
            kind: components["schemas"]["EquipmentKindEnum"];
            label: string;
            serial?: string;
            ratings?: unknown;
            /** Format: date */
            made_on?: string | null;
            /** Format: date */
            next_inspection_due?: string | null;
            in_service?: boolean;
        };
        Grant: {
            readonly id: number;
            readonly site: number;
            contractor: number;
            readonly contractor_name: string;
            /** Format: date */
            starts_on: string;
            /** Format: date */
            ends_on: string;
            /** Format: date-time */
            readonly granted_at: string;
            /** Format: date-time */
            readonly ended_at: string;
            readonly ended_reason: string;
        };
        GrantRequest: {
            contractor: number;
            /** Format: date */
            starts_on: string;
            /** Format: date */
            ends_on: string;
        };
        Hold: {
            readonly id: number;
            requirement: string;
            item_key: string;
            reason: string;
            sheet?: number | null;
            /** Format: date-time */
            readonly opened_at: string;
            /** Format: date-time */
            readonly found_at: string | null;
            /** Format: date-time */
            readonly cleared_at: string | null;
            readonly cleared_by_sheet: number | null;
        };
        ItemChange: {
            key: string;
            fields: string[];
            before: {
                [key: string]: unknown;
            };
            after: {
                [key: string]: unknown;
            };
        };
        ItemEntry: {
            item_key: string;
            kind: string;
            value?: unknown;
            unit?: string;
            verdict: components["schemas"]["VerdictEnum"];
            blocking: boolean;
            /** Format: double */
            margin?: number | null;
            message?: string;
            working?: unknown;
        };
        Job: {
            readonly id: number;
            site: number;
            readonly site_name: string;
            /** Format: date */
            date: string;
            readonly state: components["schemas"]["JobStateEnum"];
            supervisor: number;
            readonly supervisor_name: string;
            notes?: string;
            readonly record_signed: boolean;
        };
        JobDetail: {
            readonly id: number;
            site: number;
            readonly site_name: string;
            /** Format: date */
            date: string;
            readonly state: components["schemas"]["JobStateEnum"];
            supervisor: number;
            readonly supervisor_name: string;
            notes?: string;
            readonly record_signed: boolean;
            readonly drops: components["schemas"]["Drop"][];
            readonly requirements: components["schemas"]["Requirement"][];
            readonly blockers: components["schemas"]["Reason"][];
            readonly holds: components["schemas"]["Hold"][];
            readonly cautions: string;
            readonly work_started: boolean;
            readonly was_ready: boolean;
            readonly ready_when_closed: boolean;
            readonly lapsed_checks: components["schemas"]["Reason"][];
            readonly unread_wind: string;
        };
        JobRequest: {
            site: number;
            /** Format: date */
            date: string;
            supervisor: number;
            notes?: string;
        };
        /** @enum {string} */
        JobStateEnum: "planned" | "cleared" | "working" | "held" | "closed";
        LogEntry: {
            readonly id: number;
            site: number;
            anchor: number;
            readonly anchor_label: string;
            /** Format: int64 */
            sequence: number;
            kind: components["schemas"]["LogEntryKindEnum"];
            result?: components["schemas"]["ResultEnum"];
            /** Format: date */
            performed_on: string;
            performed_by: string;
            performed_by_company?: string;
            details: string;
            sheet?: number | null;
            readonly organisation: string;
            readonly recorded_by: string;
            meaning: string;
            /** Format: date-time */
            signed_at: string;
            seal: string;
            previous_seal?: string;
            readonly document: {
                [key: string]: unknown;
            };
        };
        /** @enum {string} */
        LogEntryInputKindEnum: "periodic_inspection" | "load_test" | "repair" | "modification" | "installation" | "removed_from_service" | "returned_to_service";
        LogEntryInputRequest: {
            anchor: number;
            kind: components["schemas"]["LogEntryInputKindEnum"];
            /** @default none */
            result: components["schemas"]["ResultEnum"];
            /** Format: date */
            performed_on: string;
            performed_by?: string;
            performed_by_company?: string;
            details: string;
            password: string;
        };
        /** @enum {string} */
        LogEntryKindEnum: "periodic_inspection" | "load_test" | "repair" | "modification" | "installation" | "removed_from_service" | "returned_to_service" | "pre_use_check";
        LoginInputRequest: {
            username: string;
            password: string;
        };
        /** @enum {string} */
        MeaningEnum: "reviewed_exceptions" | "reviewed_safe" | "reviewed_stopped";
        /** @enum {string} */
        MinimumEnum: "above_zero" | "zero_or_more";
        /** @enum {unknown} */
        NullEnum: null;
        PaginatedAnchorList: {
            /** @example 123 */
            count: number;
            /**
             * Format: uri
             * @example http://api.example.org/accounts/?offset=400&limit=100
             */
            next?: string | null;
            /**
             * Format: uri
             * @example http://api.example.org/accounts/?offset=200&limit=100
             */
            previous?: string | null;
            results: components["schemas"]["Anchor"][];
        };
        PaginatedChecklistList: {
            /** @example 123 */
            count: number;
            /**
             * Format: uri
             * @example http://api.example.org/accounts/?offset=400&limit=100
             */
            next?: string | null;
            /**
             * Format: uri
             * @example http://api.example.org/accounts/?offset=200&limit=100
             */
            previous?: string | null;
            results: components["schemas"]["Checklist"][];
        };
        PaginatedChecklistVersionList: {
            /** @example 123 */
            count: number;
            /**
             * Format: uri
             * @example http://api.example.org/accounts/?offset=400&limit=100
             */
            next?: string | null;
            /**
             * Format: uri
             * @example http://api.example.org/accounts/?offset=200&limit=100
             */
            previous?: string | null;
            results: components["schemas"]["ChecklistVersion"][];
        };
        PaginatedEquipmentList: {
            /** @example 123 */
            count: number;
            /**
             * Format: uri
             * @example http://api.example.org/accounts/?offset=400&limit=100
             */
            next?: string | null;
            /**
             * Format: uri
             * @example http://api.example.org/accounts/?offset=200&limit=100
             */
            previous?: string | null;
            results: components["schemas"]["Equipment"][];
        };
        PaginatedJobList: {
            /** @example 123 */
            count: number;
            /**
             * Format: uri
             * @example http://api.example.org/accounts/?offset=400&limit=100
             */
            next?: string | null;
            /**
             * Format: uri
             * @example http://api.example.org/accounts/?offset=200&limit=100
             */
            previous?: string | null;
            results: components["schemas"]["Job"][];
        };
        PaginatedLogEntryList: {
            /** @example 123 */
            count: number;
            /**
             * Format: uri
             * @example http://api.example.org/accounts/?offset=400&limit=100
             */
            next?: string | null;
            /**
             * Format: uri
             * @example http://api.example.org/accounts/?offset=200&limit=100
             */
            previous?: string | null;
            results: components["schemas"]["LogEntry"][];
        };
        PaginatedProfileList: {
            /** @example 123 */
            count: number;
            /**
             * Format: uri
             * @example http://api.example.org/accounts/?offset=400&limit=100
             */
            next?: string | null;
            /**
             * Format: uri
             * @example http://api.example.org/accounts/?offset=200&limit=100
             */
            previous?: string | null;
            results: components["schemas"]["Profile"][];
        };
        PaginatedRecordList: {
            /** @example 123 */
            count: number;
            /**
             * Format: uri
             * @example http://api.example.org/accounts/?offset=400&limit=100
             */
            next?: string | null;
            /**
             * Format: uri
             * @example http://api.example.org/accounts/?offset=200&limit=100
             */
            previous?: string | null;
            results: components["schemas"]["Record"][];
        };
        PaginatedSheetList: {
            /** @example 123 */
            count: number;
            /**
             * Format: uri
             * @example http://api.example.org/accounts/?offset=400&limit=100
             */
            next?: string | null;
            /**
             * Format: uri
             * @example http://api.example.org/accounts/?offset=200&limit=100
             */
            previous?: string | null;
            results: components["schemas"]["Sheet"][];
        };
        PaginatedSiteList: {
            /** @example 123 */
            count: number;
            /**
             * Format: uri
             * @example http://api.example.org/accounts/?offset=400&limit=100
             */
            next?: string | null;
            /**
             * Format: uri
             * @example http://api.example.org/accounts/?offset=200&limit=100
             */
            previous?: string | null;
            results: components["schemas"]["Site"][];
        };
        PaginatedTransitionList: {
            /** @example 123 */
            count: number;
            /**
             * Format: uri
             * @example http://api.example.org/accounts/?offset=400&limit=100
             */
            next?: string | null;
            /**
             * Format: uri
             * @example http://api.example.org/accounts/?offset=200&limit=100
             */
            previous?: string | null;
            results: components["schemas"]["Transition"][];
        };
        PatchedChecklistVersionRequest: {
            items?: unknown;
            notes?: string;
        };
        PatchedEquipmentChangeInputRequest: {
            label?: string;
            serial?: string;
            ratings?: unknown;
            /** Format: date */
            made_on?: string | null;
            /** Format: date */
            next_inspection_due?: string | null;
            in_service?: boolean;
            reason?: string;
        };
        PdfRendering: {
            status: string;
            detail: string;
        };
        PhotoInputRequest: {
            /** Format: uuid */
            client_uuid: string;
            job: number;
            /** Format: uuid */
            sheet_uuid?: string | null;
            item_key?: string;
            /** Format: binary */
            image: string;
        };
        PhotoOutput: {
            /** Format: uuid */
            client_uuid: string;
            job: number;
            /** Format: uuid */
            sheet_uuid: string;
            item_key: string;
            sha256: string;
            width: number;
            height: number;
            /** Format: date-time */
            uploaded_at: string;
        };
        PlanCheck: {
            conflicts: components["schemas"]["Conflict"][];
        };
        PlanCheckInputRequest: {
            robot?: number;
            tether?: number;
            safety_line?: number;
            hose?: number;
            anchor?: number;
            safety_anchor?: number;
            /** Format: double */
            length_m?: number;
        };
        Profile: {
            key: string;
            name: string;
            thresholds: unknown;
            cautions: string;
            content_hash: string;
        };
        RatingField: {
            key: string;
            label: string;
            unit: string;
            required: boolean;
            text: boolean;
            minimum: (components["schemas"]["MinimumEnum"] | components["schemas"]["NullEnum"]) | null;
            choices: string[];
        };
        Reason: {
            code: string;
            message: string;
            requirement?: string | null;
        };
        ReasonInputRequest: {
            reason?: string;
        };
        Record: {
            readonly id: number;
            /** @default record */
            kind: components["schemas"]["RecordKindEnum"];
            site: number;
            job: number;
            readonly date: string;
            amends?: number | null;
            /** Format: int64 */
            sequence: number;
            previous_seal?: string;
            seal: string;
            signer_name: string;
            signer_role: string;
            meaning: string;
            /** Format: date-time */
            signed_at: string;
            readonly pdf_ready: boolean;
        };
        /** @enum {string} */
        RecordKindEnum: "record" | "addendum";
        Requirement: {
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
            latest_version: number | null;
            /** Format: date-time */
            read_again_by: string | null;
        };
        /** @enum {string} */
        ResultEnum: "pass" | "fail" | "none";
        /** @enum {string} */
        RoleEnum: "operator" | "supervisor" | "auditor" | "admin" | "property_manager";
        Sheet: {
            readonly id: number;
            /** Format: uuid */
            client_uuid?: string;
            job: number;
            /** Format: date */
            readonly date: string;
            checklist: string;
            version: number;
            version_number: number;
            version_hash: string;
            subject_kind: components["schemas"]["SubjectKindEnum"];
            anchor?: number | null;
            equipment?: number | null;
            filled_by: string;
            /** Format: date-time */
            device_time?: string | null;
            /** Format: date-time */
            readonly received_at: string;
            verdict: components["schemas"]["VerdictEnum"];
            /** Format: int64 */
            blocking_failures?: number;
            remarks?: string;
            entries: components["schemas"]["ItemEntry"][];
        };
        SheetInputRequest: {
            /** Format: uuid */
            client_uuid?: string;
            job: number;
            version: number;
            anchor?: number | null;
            equipment?: number | null;
            /** Format: date-time */
            device_time?: string | null;
            remarks?: string;
            entries: {
                [key: string]: unknown;
            };
            /** Format: date-time */
            sent_at?: string | null;
        };
        SignInputRequest: {
            password: string;
            meaning: components["schemas"]["MeaningEnum"];
            remarks?: string;
        };
        Signer: {
            subject: string;
            fingerprint_sha256: string;
            organisation: string;
        };
        Site: {
            readonly id: number;
            name: string;
            address?: string;
            /** Format: double */
            height_m: number;
            /** Format: int64 */
            storeys?: number | null;
            profile: string;
            terrain?: components["schemas"]["TerrainEnum"];
            roof_outline?: unknown;
            readonly owned: boolean;
        };
        SiteRequest: {
            name: string;
            address?: string;
            /** Format: double */
            height_m: number;
            /** Format: int64 */
            storeys?: number | null;
            profile: string;
            terrain?: components["schemas"]["TerrainEnum"];
            roof_outline?: unknown;
        };
        /** @enum {string} */
        SubjectKindEnum: "anchor" | "robot" | "tether" | "safety_line" | "hose" | "site";
        SyncInputRequest: {
            records: unknown[];
            /** Format: date-time */
            sent_at?: string | null;
        };
        SyncJob: {
            id: number;
            state: components["schemas"]["JobStateEnum"];
            /** Format: date */
            date: string;
        };
        SyncLine: {
            client_uuid: string | null;
            status: components["schemas"]["SyncLineStatusEnum"];
            duplicate?: boolean;
            errors?: {
                [key: string]: unknown;
            };
            reasons?: components["schemas"]["Reason"][];
            sheet?: number;
            verdict?: components["schemas"]["VerdictEnum"];
            blocking_failures?: number;
            drop_log?: number;
            job?: number;
            state?: components["schemas"]["JobStateEnum"];
        };
        /** @enum {string} */
        SyncLineStatusEnum: "applied" | "rejected";
        SyncResult: {
            results: components["schemas"]["SyncLine"][];
            jobs: components["schemas"]["SyncJob"][];
            /** Format: date-time */
            server_time: string;
        };
        /** @enum {string} */
        TerrainEnum: "0" | "I" | "II" | "III" | "IV";
        Token: {
            token: string;
            /** Format: date-time */
            expires_at: string;
        };
        Transition: {
            from_state: components["schemas"]["JobStateEnum"];
            to_state: components["schemas"]["JobStateEnum"];
            by?: string;
            /** Format: date-time */
            readonly at: string;
            reason: string;
        };
        User: {
            readonly id: number;
            username: string;
            readonly name: string;
            role?: components["schemas"]["RoleEnum"];
            readonly organisation: string;
        };
        /** @enum {string} */
        VerdictEnum: "pass" | "fail" | "na" | "recorded";
        VerifyInputRequest: {
            /** Format: binary */
            file: string;
        };
        VerifyReport: {
            ok: boolean;
            intact: boolean;
            vouched: boolean;
            verdict: string;
            seal: string | null;
            signer: components["schemas"]["Signer"] | null;
            trust: string;
            checks: components["schemas"]["Check"][];
        };
        VersionDiff: {
            to: components["schemas"]["VersionRef"];
            added: {
                [key: string]: unknown;
            }[];
            removed: {
                [key: string]: unknown;
            }[];
            changed: components["schemas"]["ItemChange"][];
            unified: string;
            from: components["schemas"]["VersionRef"];
        };
        VersionRef: {
            id: number;
            number: number;
            content_hash: string;
        };
    };
    responses: never;
    parameters: never;
    requestBodies: never;
    headers: never;
    pathItems: never;
}
export type $defs = Record<string, never>;
export interface operations {
    v1_anchor_log_list: {
        parameters: {
            query?: {
                limit?: number;
                offset?: number;
            };
            header?: never;
            path?: never;
            cookie?: never;
        };
        requestBody?: never;
        responses: {
            200: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["PaginatedLogEntryList"];
                };
            };
        };
    };
    v1_anchor_log_create: {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        requestBody: {
            content: {
                "application/json": components["schemas"]["LogEntryInputRequest"];
            };
        };
        responses: {
            201: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["LogEntry"];
                };
            };
        };
    };
    v1_anchor_log_retrieve: {
        parameters: {
            query?: never;
            header?: never;
            path: {
                id: number;
            };
            cookie?: never;
        };
        requestBody?: never;
        responses: {
            200: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["LogEntry"];
                };
            };
        };
    };
    v1_anchor_log_pdf_retrieve: {
        parameters: {
            query: {
                anchor?: number;
                site: number;
            };
            header?: never;
            path?: never;
            cookie?: never;
        };
        requestBody?: never;
        responses: {
            200: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/pdf": string;
                };
            };
        };
    };
    v1_anchors_list: {
        parameters: {
            query?: {
                limit?: number;
                offset?: number;
            };
            header?: never;
            path?: never;
            cookie?: never;
        };
        requestBody?: never;
        responses: {
            200: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["PaginatedAnchorList"];
                };
            };
        };
    };
    v1_anchors_create: {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        requestBody: {
            content: {
                "application/json": components["schemas"]["AnchorRequest"];
            };
        };
        responses: {
            201: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["Anchor"];
                };
            };
        };
    };
    v1_anchors_retrieve: {
        parameters: {
            query?: never;
            header?: never;
            path: {
                id: number;
            };
            cookie?: never;
        };
        requestBody?: never;
        responses: {
            200: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["Anchor"];
                };
            };
        };
    };
    v1_anchors_certifications_list: {
        parameters: {
            query?: never;
            header?: never;
            path: {
                id: number;
            };
            cookie?: never;
        };
        requestBody?: never;
        responses: {
            200: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["Certification"][];
                };
            };
        };
    };
    v1_anchors_certifications_create: {
        parameters: {
            query?: never;
            header?: never;
            path: {
                id: number;
            };
            cookie?: never;
        };
        requestBody: {
            content: {
                "application/json": components["schemas"]["CertificationRequest"];
                "multipart/form-data": components["schemas"]["CertificationRequest"];
            };
        };
        responses: {
            201: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["Certification"];
                };
            };
        };
    };
    v1_anchors_certifications_file_retrieve: {
        parameters: {
            query?: never;
            header?: never;
            path: {
                cert_pk: string;
                id: number;
            };
            cookie?: never;
        };
        requestBody?: never;
        responses: {
            200: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/octet-stream": string;
                };
            };
        };
    };
    v1_auth_login_create: {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        requestBody: {
            content: {
                "application/json": components["schemas"]["LoginInputRequest"];
            };
        };
        responses: {
            200: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["User"];
                };
            };
        };
    };
    v1_auth_logout_create: {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        requestBody?: never;
        responses: {
            204: {
                headers: {
                    [name: string]: unknown;
                };
                content?: never;
            };
        };
    };
    v1_auth_token_create: {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        requestBody: {
            content: {
                "application/json": components["schemas"]["LoginInputRequest"];
            };
        };
        responses: {
            200: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["Token"];
                };
            };
        };
    };
    v1_calc_create: {
        parameters: {
            query?: never;
            header?: never;
            path: {
                name: string;
            };
            cookie?: never;
        };
        requestBody?: {
            content: {
                "application/json": components["schemas"]["CalcInputRequest"];
            };
        };
        responses: {
            200: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["CalcResult"];
                };
            };
        };
    };
    v1_checklist_versions_list: {
        parameters: {
            query?: {
                limit?: number;
                offset?: number;
            };
            header?: never;
            path?: never;
            cookie?: never;
        };
        requestBody?: never;
        responses: {
            200: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["PaginatedChecklistVersionList"];
                };
            };
        };
    };
    v1_checklist_versions_retrieve: {
        parameters: {
            query?: never;
            header?: never;
            path: {
                id: number;
            };
            cookie?: never;
        };
        requestBody?: never;
        responses: {
            200: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["ChecklistVersion"];
                };
            };
        };
    };
    v1_checklist_versions_partial_update: {
        parameters: {
            query?: never;
            header?: never;
            path: {
                id: number;
            };
            cookie?: never;
        };
        requestBody?: {
            content: {
                "application/json": components["schemas"]["PatchedChecklistVersionRequest"];
            };
        };
        responses: {
            200: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["ChecklistVersion"];
                };
            };
        };
    };
    v1_checklist_versions_diff_retrieve: {
        parameters: {
            query?: {
                against?: number;
            };
            header?: never;
            path: {
                id: number;
            };
            cookie?: never;
        };
        requestBody?: never;
        responses: {
            200: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["VersionDiff"];
                };
            };
        };
    };
    v1_checklist_versions_publish_create: {
        parameters: {
            query?: never;
            header?: never;
            path: {
                id: number;
            };
            cookie?: never;
        };
        requestBody?: never;
        responses: {
            200: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["ChecklistVersion"];
                };
            };
        };
    };
    v1_checklists_list: {
        parameters: {
            query?: {
                limit?: number;
                offset?: number;
            };
            header?: never;
            path?: never;
            cookie?: never;
        };
        requestBody?: never;
        responses: {
            200: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["PaginatedChecklistList"];
                };
            };
        };
    };
    v1_checklists_create: {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        requestBody: {
            content: {
                "application/json": components["schemas"]["ChecklistRequest"];
            };
        };
        responses: {
            201: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["Checklist"];
                };
            };
        };
    };
    v1_checklists_retrieve: {
        parameters: {
            query?: never;
            header?: never;
            path: {
                id: number;
            };
            cookie?: never;
        };
        requestBody?: never;
        responses: {
            200: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["Checklist"];
                };
            };
        };
    };
    v1_checklists_versions_create: {
        parameters: {
            query?: never;
            header?: never;
            path: {
                id: number;
            };
            cookie?: never;
        };
        requestBody: {
            content: {
                "application/json": components["schemas"]["ChecklistVersionRequest"];
            };
        };
        responses: {
            201: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["ChecklistVersion"];
                };
            };
        };
    };
    v1_due_retrieve: {
        parameters: {
            query?: {
                within?: number;
            };
            header?: never;
            path?: never;
            cookie?: never;
        };
        requestBody?: never;
        responses: {
            200: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["DueList"];
                };
            };
        };
    };
    v1_equipment_list: {
        parameters: {
            query?: {
                limit?: number;
                offset?: number;
            };
            header?: never;
            path?: never;
            cookie?: never;
        };
        requestBody?: never;
        responses: {
            200: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["PaginatedEquipmentList"];
                };
            };
        };
    };
    v1_equipment_create: {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        requestBody: {
            content: {
                "application/json": components["schemas"]["EquipmentRequest"];
            };
        };
        responses: {
            201: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["Equipment"];
                };
            };
        };
    };
    v1_equipment_retrieve: {
        parameters: {
            query?: never;
            header?: never;
            path: {
                id: number;
            };
            cookie?: never;
        };
        requestBody?: never;
        responses: {
            200: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["Equipment"];
                };
            };
        };
    };
    v1_equipment_partial_update: {
        parameters: {
            query?: never;
            header?: never;
            path: {
                id: number;
            };
            cookie?: never;
        };
        requestBody?: {
            content: {
                "application/json": components["schemas"]["PatchedEquipmentChangeInputRequest"];
            };
        };
        responses: {
            200: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["Equipment"];
                };
            };
        };
    };
    v1_equipment_kinds_list: {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        requestBody?: never;
        responses: {
            200: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["EquipmentKind"][];
                };
            };
        };
    };
    v1_jobs_list: {
        parameters: {
            query?: {
                limit?: number;
                offset?: number;
            };
            header?: never;
            path?: never;
            cookie?: never;
        };
        requestBody?: never;
        responses: {
            200: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["PaginatedJobList"];
                };
            };
        };
    };
    v1_jobs_create: {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        requestBody: {
            content: {
                "application/json": components["schemas"]["JobRequest"];
            };
        };
        responses: {
            201: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["JobDetail"];
                };
            };
        };
    };
    v1_jobs_retrieve: {
        parameters: {
            query?: never;
            header?: never;
            path: {
                id: number;
            };
            cookie?: never;
        };
        requestBody?: never;
        responses: {
            200: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["JobDetail"];
                };
            };
        };
    };
    v1_jobs_close_create: {
        parameters: {
            query?: never;
            header?: never;
            path: {
                id: number;
            };
            cookie?: never;
        };
        requestBody?: {
            content: {
                "application/json": components["schemas"]["ReasonInputRequest"];
            };
        };
        responses: {
            200: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["JobDetail"];
                };
            };
        };
    };
    v1_jobs_drops_create: {
        parameters: {
            query?: never;
            header?: never;
            path: {
                id: number;
            };
            cookie?: never;
        };
        requestBody: {
            content: {
                "application/json": components["schemas"]["DropRequest"];
            };
        };
        responses: {
            201: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["Drop"];
                };
            };
        };
    };
    v1_jobs_pause_create: {
        parameters: {
            query?: never;
            header?: never;
            path: {
                id: number;
            };
            cookie?: never;
        };
        requestBody?: {
            content: {
                "application/json": components["schemas"]["ReasonInputRequest"];
            };
        };
        responses: {
            200: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["JobDetail"];
                };
            };
        };
    };
    v1_jobs_plan_check_create: {
        parameters: {
            query?: never;
            header?: never;
            path: {
                id: number;
            };
            cookie?: never;
        };
        requestBody?: {
            content: {
                "application/json": components["schemas"]["PlanCheckInputRequest"];
            };
        };
        responses: {
            200: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["PlanCheck"];
                };
            };
        };
    };
    v1_jobs_sign_create: {
        parameters: {
            query?: never;
            header?: never;
            path: {
                id: number;
            };
            cookie?: never;
        };
        requestBody: {
            content: {
                "application/json": components["schemas"]["SignInputRequest"];
            };
        };
        responses: {
            201: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["Record"];
                };
            };
        };
    };
    v1_jobs_start_create: {
        parameters: {
            query?: never;
            header?: never;
            path: {
                id: number;
            };
            cookie?: never;
        };
        requestBody?: never;
        responses: {
            200: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["JobDetail"];
                };
            };
        };
    };
    v1_jobs_transitions_list: {
        parameters: {
            query?: {
                limit?: number;
                offset?: number;
            };
            header?: never;
            path: {
                id: number;
            };
            cookie?: never;
        };
        requestBody?: never;
        responses: {
            200: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["PaginatedTransitionList"];
                };
            };
        };
    };
    v1_me_retrieve: {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        requestBody?: never;
        responses: {
            200: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["User"];
                };
            };
        };
    };
    v1_me_calendar_retrieve: {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        requestBody?: never;
        responses: {
            200: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["CalendarState"];
                };
            };
            201: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["CalendarAddress"];
                };
            };
            204: {
                headers: {
                    [name: string]: unknown;
                };
                content?: never;
            };
        };
    };
    v1_me_calendar_create: {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        requestBody?: never;
        responses: {
            200: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["CalendarState"];
                };
            };
            201: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["CalendarAddress"];
                };
            };
            204: {
                headers: {
                    [name: string]: unknown;
                };
                content?: never;
            };
        };
    };
    v1_me_calendar_destroy: {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        requestBody?: never;
        responses: {
            200: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["CalendarState"];
                };
            };
            201: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["CalendarAddress"];
                };
            };
            204: {
                headers: {
                    [name: string]: unknown;
                };
                content?: never;
            };
        };
    };
    v1_photos_create: {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        requestBody: {
            content: {
                "multipart/form-data": components["schemas"]["PhotoInputRequest"];
            };
        };
        responses: {
            201: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["PhotoOutput"];
                };
            };
        };
    };
    v1_profiles_list: {
        parameters: {
            query?: {
                limit?: number;
                offset?: number;
            };
            header?: never;
            path?: never;
            cookie?: never;
        };
        requestBody?: never;
        responses: {
            200: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["PaginatedProfileList"];
                };
            };
        };
    };
    v1_profiles_retrieve: {
        parameters: {
            query?: never;
            header?: never;
            path: {
                key: string;
            };
            cookie?: never;
        };
        requestBody?: never;
        responses: {
            200: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["Profile"];
                };
            };
        };
    };
    v1_profiles_revisions_retrieve: {
        parameters: {
            query?: never;
            header?: never;
            path: {
                key: string;
            };
            cookie?: never;
        };
        requestBody?: never;
        responses: {
            200: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": {
                        [key: string]: unknown;
                    };
                };
            };
        };
    };
    v1_records_list: {
        parameters: {
            query?: {
                limit?: number;
                offset?: number;
            };
            header?: never;
            path?: never;
            cookie?: never;
        };
        requestBody?: never;
        responses: {
            200: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["PaginatedRecordList"];
                };
            };
        };
    };
    v1_records_retrieve: {
        parameters: {
            query?: never;
            header?: never;
            path: {
                id: number;
            };
            cookie?: never;
        };
        requestBody?: never;
        responses: {
            200: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["Record"];
                };
            };
        };
    };
    v1_records_addenda_create: {
        parameters: {
            query?: never;
            header?: never;
            path: {
                id: number;
            };
            cookie?: never;
        };
        requestBody: {
            content: {
                "application/json": components["schemas"]["AddendumInputRequest"];
            };
        };
        responses: {
            201: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["Record"];
                };
            };
        };
    };
    v1_records_pdf_retrieve: {
        parameters: {
            query?: never;
            header?: never;
            path: {
                id: number;
            };
            cookie?: never;
        };
        requestBody?: never;
        responses: {
            200: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/pdf": string;
                };
            };
            202: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["PdfRendering"];
                };
            };
        };
    };
    v1_records_verify_retrieve: {
        parameters: {
            query?: never;
            header?: never;
            path: {
                id: number;
            };
            cookie?: never;
        };
        requestBody?: never;
        responses: {
            200: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["VerifyReport"];
                };
            };
            202: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["PdfRendering"];
                };
            };
        };
    };
    v1_records_export_retrieve: {
        parameters: {
            query?: {
                end?: string;
                site?: number;
                start?: string;
            };
            header?: never;
            path?: never;
            cookie?: never;
        };
        requestBody?: never;
        responses: {
            200: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/zip": string;
                };
            };
        };
    };
    v1_sheets_list: {
        parameters: {
            query?: {
                limit?: number;
                offset?: number;
            };
            header?: never;
            path?: never;
            cookie?: never;
        };
        requestBody?: never;
        responses: {
            200: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["PaginatedSheetList"];
                };
            };
        };
    };
    v1_sheets_create: {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        requestBody: {
            content: {
                "application/json": components["schemas"]["SheetInputRequest"];
            };
        };
        responses: {
            200: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["Sheet"];
                };
            };
            201: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["Sheet"];
                };
            };
        };
    };
    v1_sheets_retrieve: {
        parameters: {
            query?: never;
            header?: never;
            path: {
                id: number;
            };
            cookie?: never;
        };
        requestBody?: never;
        responses: {
            200: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["Sheet"];
                };
            };
        };
    };
    v1_sites_list: {
        parameters: {
            query?: {
                limit?: number;
                offset?: number;
            };
            header?: never;
            path?: never;
            cookie?: never;
        };
        requestBody?: never;
        responses: {
            200: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["PaginatedSiteList"];
                };
            };
        };
    };
    v1_sites_create: {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        requestBody: {
            content: {
                "application/json": components["schemas"]["SiteRequest"];
            };
        };
        responses: {
            201: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["Site"];
                };
            };
        };
    };
    v1_sites_retrieve: {
        parameters: {
            query?: never;
            header?: never;
            path: {
                id: number;
            };
            cookie?: never;
        };
        requestBody?: never;
        responses: {
            200: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["Site"];
                };
            };
        };
    };
    v1_sites_grants_list: {
        parameters: {
            query?: never;
            header?: never;
            path: {
                id: number;
            };
            cookie?: never;
        };
        requestBody?: never;
        responses: {
            200: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["Grant"][];
                };
            };
        };
    };
    v1_sites_grants_create: {
        parameters: {
            query?: never;
            header?: never;
            path: {
                id: number;
            };
            cookie?: never;
        };
        requestBody: {
            content: {
                "application/json": components["schemas"]["GrantRequest"];
            };
        };
        responses: {
            200: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["Grant"][];
                };
            };
        };
    };
    v1_sites_grants_end_create: {
        parameters: {
            query?: never;
            header?: never;
            path: {
                grant_pk: number;
                id: number;
            };
            cookie?: never;
        };
        requestBody?: {
            content: {
                "application/json": components["schemas"]["EndGrantInputRequest"];
            };
        };
        responses: {
            200: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["EndedGrant"];
                };
            };
        };
    };
    v1_sync_create: {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        requestBody: {
            content: {
                "application/json": components["schemas"]["SyncInputRequest"];
            };
        };
        responses: {
            200: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["SyncResult"];
                };
            };
        };
    };
    v1_verify_create: {
        parameters: {
            query?: never;
            header?: never;
            path?: never;
            cookie?: never;
        };
        requestBody: {
            content: {
                "multipart/form-data": components["schemas"]["VerifyInputRequest"];
            };
        };
        responses: {
            200: {
                headers: {
                    [name: string]: unknown;
                };
                content: {
                    "application/json": components["schemas"]["VerifyReport"];
                };
            };
        };
    };
}
