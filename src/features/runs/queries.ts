import { useMutation, useQueries, useQuery, useQueryClient } from "@tanstack/react-query";
import type { PanelDetail } from "../../../shared/api/panels";
import { panelKeys } from "../panels/queries";
import type { z } from "zod";
import type { CreateRunBody, MismatchView, RunChecksBody, RunDetail, RunSummary, createdShareView, shareView } from "../../../shared/api/runs";
import type { Fault } from "../../../shared/virtual/faults";
import { api } from "../../lib/api";

/**
 * Server data for runs (the contract is shared/api/runs.ts). Components use these hooks and
 * never call fetch. Every key starts with ["workshops", id, "runs"].
 */

export type ShareView = z.infer<typeof shareView>;
export type CreatedShareView = z.infer<typeof createdShareView>;

const base = (workshopId: string) => `/workshops/${workshopId}/runs`;

export const runKeys = {
  all: (workshopId: string) => ["workshops", workshopId, "runs"] as const,
  detail: (workshopId: string, runId: string) => ["workshops", workshopId, "runs", runId] as const,
  mismatches: (workshopId: string, runId: string) => ["workshops", workshopId, "runs", runId, "mismatches"] as const,
  report: (workshopId: string, runId: string) => ["workshops", workshopId, "runs", runId, "report"] as const,
  shares: (workshopId: string, runId: string) => ["workshops", workshopId, "runs", runId, "shares"] as const,
  shared: (token: string) => ["shared", token] as const,
};

export function useRuns(workshopId: string) {
  return useQuery({
    queryKey: runKeys.all(workshopId),
    queryFn: () => api.get<RunSummary[]>(base(workshopId)),
    refetchOnMount: "always",
    refetchInterval: (q) => (q.state.data?.some((r) => r.state === "playing" || r.state === "seeking") ? 3000 : false),
  });
}

export function useRun(workshopId: string, runId: string) {
  return useQuery({ queryKey: runKeys.detail(workshopId, runId), queryFn: () => api.get<RunDetail>(`${base(workshopId)}/${runId}`) });
}

export function useMismatches(workshopId: string, runId: string) {
  return useQuery({ queryKey: runKeys.mismatches(workshopId, runId), queryFn: () => api.get<MismatchView[]>(`${base(workshopId)}/${runId}/mismatches`) });
}

export function useCreateRun(workshopId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: CreateRunBody) => api.post<RunDetail>(base(workshopId), body),
    onSuccess: () => qc.invalidateQueries({ queryKey: runKeys.all(workshopId) }),
  });
}

export type ControlAction =
  | { action: "play"; override?: boolean }
  | { action: "loop"; loop: { fromMs: number; toMs: number } | null }
  | { action: "pause" }
  | { action: "step" }
  | { action: "stop" }
  | { action: "seek"; toMs: number }
  | { action: "speed"; speed: number };

export function useControlRun(workshopId: string, runId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: ControlAction) => api.post<RunDetail>(`${base(workshopId)}/${runId}/control`, body),
    onSuccess: (detail) => qc.setQueryData(runKeys.detail(workshopId, runId), detail),
  });
}

/** Several panels' details at once (the run's panels), under the panels' own keys. */
export function useRunPanels(workshopId: string, panelIds: readonly string[]) {
  return useQueries({
    queries: panelIds.map((panelId) => ({ queryKey: panelKeys.detail(workshopId, panelId), queryFn: () => api.get<PanelDetail>(`/workshops/${workshopId}/panels/${panelId}`) })),
  });
}

/** POST .../checks: input walk (start, skip, cancel), observed elements, answers at checkpoints. */
export function useRunChecks(workshopId: string, runId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: RunChecksBody) => api.post<RunDetail>(`${base(workshopId)}/${runId}/checks`, body),
    onSuccess: (detail) => qc.setQueryData(runKeys.detail(workshopId, runId), detail),
  });
}

/** PUT .../links/:panelId/faults: a virtual link's injected faults, changed while the run is open. */
export function useLinkFaults(workshopId: string, runId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: ({ panelId, faults }: { panelId: string; faults: Fault[] }) => api.put<RunDetail>(`${base(workshopId)}/${runId}/links/${panelId}/faults`, { faults }),
    onSuccess: (detail) => qc.setQueryData(runKeys.detail(workshopId, runId), detail),
  });
}

export function useShares(workshopId: string, runId: string) {
  return useQuery({ queryKey: runKeys.shares(workshopId, runId), queryFn: () => api.get<ShareView[]>(`${base(workshopId)}/${runId}/shares`) });
}

export function useCreateShare(workshopId: string, runId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (expiresInDays: number) => api.post<CreatedShareView>(`${base(workshopId)}/${runId}/shares`, { expiresInDays }),
    onSuccess: () => qc.invalidateQueries({ queryKey: runKeys.shares(workshopId, runId) }),
  });
}

export function useRevokeShare(workshopId: string, runId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (shareId: string) => api.delete<ShareView>(`${base(workshopId)}/${runId}/shares/${shareId}`),
    onSuccess: () => qc.invalidateQueries({ queryKey: runKeys.shares(workshopId, runId) }),
  });
}

/** Plain links the browser saves (attachment answers). */
export const exportJsonUrl = (workshopId: string, runId: string) => `/api${base(workshopId)}/${runId}/export.json`;
export const junitUrl = (workshopId: string, runId: string) => `/api${base(workshopId)}/${runId}/junit.xml`;

type Lag = { count: number; p50: number | null; p95: number | null; max: number | null };

/** The run report (docs/run-report.md), as export.json and the shared page answer it. */
export interface RunReportView {
  format: string;
  version: number;
  run: {
    id: string;
    name: string;
    state: string;
    recording: { id: string; name: string };
    speed: number;
    positionMs: number;
    durationMs: number;
    createdBy: string | null;
    createdAt: string;
    finishedAt: string | null;
    judgedAt: string | null;
  };
  summary: { passed: boolean; counts: Record<string, number>; elements: number; mismatchCount: number; lag: Lag };
  panels: {
    panelId: string;
    name: string;
    definitionId: string;
    link: { kind: string; connected: boolean; faults: Record<string, number>; gaps: { fromMs: number; toMs: number }[] };
    elements: {
      elementId: string;
      label: string;
      kind: string;
      status: string;
      mismatchCount: number;
      lag: Lag;
      noDataMs: number;
      reports: number;
      mismatches: { id?: string; track: string; kind: MismatchView["kind"]; startMs: number; endMs: number; worstError: number; expected: string; seen: string; atMs: number }[];
    }[];
  }[];
}
