import { queryOptions, useMutation, useQuery } from "@tanstack/react-query";
import type { EmailReportAnswer, EmailReportBody, PanelRunHistoryRow, PointerTracesView, RunComparisonView, RunExpectedView } from "../../../shared/api/run-reports";
import { api } from "../../lib/api";
import { runKeys, type RunReportView } from "./queries";

/**
 * Server data for the report side of runs (shared/api/run-reports.ts): the report page's drawings,
 * history, comparison and e-mail. The report page is read by members and by share links alike,
 * so its views take a `ReportSource` that says which door to use.
 */
export type ReportSource = { kind: "workshop"; workshopId: string; runId: string } | { kind: "shared"; token: string };

const sourcePath = (s: ReportSource) => (s.kind === "workshop" ? `/workshops/${s.workshopId}/runs/${s.runId}` : `/shared/${encodeURIComponent(s.token)}`);
const sourceKey = (s: ReportSource) => (s.kind === "workshop" ? runKeys.detail(s.workshopId, s.runId) : runKeys.shared(s.token));

/**
 * Expected timelines, definitions and coverage gaps of every panel of the run (computed once per
 * run). `enabled` false holds the request back: the report page asks only after its summary and
 * table are drawn, so this large answer (and the server's first computation of it) never delays them.
 */
export function useRunExpected(source: ReportSource, enabled = true) {
  return useQuery({
    queryKey: [...sourceKey(source), "expected"],
    queryFn: () => api.get<RunExpectedView>(`${sourcePath(source)}/expected`),
    enabled,
    staleTime: Infinity,
    retry: false,
    structuralSharing: false,
  });
}

/*
 * The report itself, as the report pages read it. Fetched once and never merged with an older copy:
 * TanStack Query's structural sharing walks every object of the answer to keep unchanged parts,
 * which for 10,000 mismatches cost more than the JSON parse (issue 6, docs/run-report.md).
 */

/** A member's view: the JSON export (docs/run-report.md), GET /api/workshops/:w/runs/:r/export.json. */
export const runReportQuery = (workshopId: string, runId: string) =>
  queryOptions({
    queryKey: runKeys.report(workshopId, runId),
    queryFn: () => api.get<RunReportView>(`/workshops/${workshopId}/runs/${runId}/export.json`),
    structuralSharing: false,
  });

export function useRunReportView(workshopId: string, runId: string) {
  return useQuery(runReportQuery(workshopId, runId));
}

/**
 * A share link's view (GET /api/shared/:token, no sign-in): the same report without its maker, and
 * until when the link works; 410 revoked or expired, 404 unknown.
 */
export const sharedReportQuery = (token: string) =>
  queryOptions({
    queryKey: runKeys.shared(token),
    queryFn: () => api.get<RunReportView & { sharedUntil: string }>(`/shared/${encodeURIComponent(token)}`),
    retry: false,
    structuralSharing: false,
  });

export function useSharedReportView(token: string) {
  return useQuery(sharedReportQuery(token));
}

/** One pointer's expected and seen angles. */
export function usePointerTraces(source: ReportSource, panelId: string | null, elementId: string | null) {
  return useQuery({
    queryKey: [...sourceKey(source), "traces", panelId, elementId],
    queryFn: () => api.get<PointerTracesView>(`${sourcePath(source)}/traces?panelId=${encodeURIComponent(panelId!)}&elementId=${encodeURIComponent(elementId!)}`),
    enabled: Boolean(panelId && elementId),
    staleTime: Infinity,
  });
}

export function usePanelRunHistory(workshopId: string, panelId: string | null) {
  return useQuery({
    queryKey: ["workshops", workshopId, "panels", panelId, "run-history"],
    queryFn: () => api.get<PanelRunHistoryRow[]>(`/workshops/${workshopId}/panels/${panelId}/run-history`),
    enabled: Boolean(panelId),
    refetchOnMount: "always",
  });
}

export function useRunComparison(workshopId: string, runId: string, otherRunId: string) {
  return useQuery({
    queryKey: [...runKeys.detail(workshopId, runId), "compare", otherRunId],
    queryFn: () => api.get<RunComparisonView>(`/workshops/${workshopId}/runs/${runId}/compare/${otherRunId}`),
    retry: false,
  });
}

export function useEmailReport(workshopId: string, runId: string) {
  return useMutation({ mutationFn: (body: EmailReportBody) => api.post<EmailReportAnswer>(`/workshops/${workshopId}/runs/${runId}/email`, body) });
}
