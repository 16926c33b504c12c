import { keepPreviousData, useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import type {
  AirframeDetail,
  AirframeSummary,
  CaptureView,
  ImportJobView,
  RecordingDetail,
  RecordingSummary,
  SeriesView,
} from "../../../shared/api/recordings";
import type { ChannelDefinition, ChannelValue } from "../../../shared/recording/channels";
import { api, uploadBytes } from "../../lib/api";
import { queryKeys } from "../../lib/query-keys";
import { uploadSearch, type UploadOptions } from "./upload";

/**
 * Server data for recordings, airframes, imports and captures (the contract is
 * shared/api/recordings.ts). Components use these hooks and never call fetch.
 */

const base = (workshopId: string) => `/workshops/${workshopId}`;

export function useAirframes(workshopId: string) {
  return useQuery({
    queryKey: queryKeys.airframes(workshopId),
    queryFn: () => api.get<AirframeSummary[]>(`${base(workshopId)}/airframes`),
  });
}

export function useAirframe(workshopId: string, airframeId: string | null) {
  return useQuery({
    queryKey: queryKeys.airframe(workshopId, airframeId ?? ""),
    queryFn: () => api.get<AirframeDetail>(`${base(workshopId)}/airframes/${airframeId}`),
    enabled: !!airframeId,
  });
}

export function useCreateAirframe(workshopId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: { name: string; description?: string }) =>
      api.post<AirframeSummary>(`${base(workshopId)}/airframes`, body),
    onSuccess: () => qc.invalidateQueries({ queryKey: queryKeys.airframes(workshopId) }),
  });
}

export function useReplaceChannels(workshopId: string, airframeId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (channels: ChannelDefinition[]) =>
      api.put<AirframeDetail>(`${base(workshopId)}/airframes/${airframeId}/channels`, { channels }),
    onSuccess: () => qc.invalidateQueries({ queryKey: queryKeys.airframes(workshopId) }),
  });
}

/** Where the catalogue JSON downloads from (a plain link, so the browser saves it). */
export const catalogueDownloadUrl = (workshopId: string, airframeId: string) =>
  `/api${base(workshopId)}/airframes/${airframeId}/channels.json`;

export function useRecordings(workshopId: string, poll: boolean) {
  return useQuery({
    queryKey: queryKeys.recordings(workshopId),
    queryFn: () => api.get<RecordingSummary[]>(`${base(workshopId)}/recordings`),
    refetchInterval: poll ? 2000 : false,
    // Recordings also arrive from others, the command line and captures: ask again whenever a screen
    // that lists them opens, rather than show a list cached a few seconds earlier.
    refetchOnMount: "always",
  });
}

/** Cache key of the recordings table's list, which also holds imports in flight and failed ones. */
const recordingsWithImportsKey = (workshopId: string) => [...queryKeys.recordings(workshopId), "with-imports"] as const;

/** Both recordings lists (never a recording's own series or values, which do not change). */
function refreshRecordingLists(qc: ReturnType<typeof useQueryClient>, workshopId: string) {
  void qc.invalidateQueries({ queryKey: recordingsWithImportsKey(workshopId) });
  return qc.invalidateQueries({ queryKey: queryKeys.recordings(workshopId), exact: true });
}

/**
 * The recordings table: recordings plus imports still running and failed ones (with where and
 * why), as rows (GET /recordings?withImports=true). Under the recordings key, so invalidating
 * the recordings list refreshes it too.
 */
export function useRecordingsWithImports(workshopId: string, poll: boolean) {
  return useQuery({
    queryKey: recordingsWithImportsKey(workshopId),
    queryFn: () => api.get<RecordingSummary[]>(`${base(workshopId)}/recordings?withImports=true`),
    refetchInterval: poll ? 2000 : false,
    refetchOnMount: "always",
  });
}

export function useRecording(workshopId: string, recordingId: string) {
  return useQuery({
    queryKey: queryKeys.recording(workshopId, recordingId),
    queryFn: () => api.get<RecordingDetail>(`${base(workshopId)}/recordings/${recordingId}`),
    refetchInterval: (q) => (q.state.data?.status === "importing" ? 1000 : false),
  });
}

/** Step series of chosen channels, over the whole recording or a zoomed window. */
export function useSeries(
  workshopId: string,
  recordingId: string,
  channels: readonly string[],
  window: { fromMs: number; toMs: number } | null,
  enabled: boolean,
) {
  return useQuery({
    queryKey: queryKeys.recordingSeries(workshopId, recordingId, channels, window?.fromMs ?? null, window?.toMs ?? null),
    queryFn: () => {
      const q = new URLSearchParams({ channels: channels.join(","), maxPoints: "2000" });
      if (window) {
        q.set("fromMs", String(Math.max(0, Math.floor(window.fromMs))));
        q.set("toMs", String(Math.max(0, Math.ceil(window.toMs))));
      }
      return api.get<SeriesView>(`${base(workshopId)}/recordings/${recordingId}/series?${q}`);
    },
    enabled: enabled && channels.length > 0,
    placeholderData: keepPreviousData,
    staleTime: Infinity,
  });
}

/** Every channel's value at one instant (one segment read on the server). */
export function useStateAt(workshopId: string, recordingId: string, t: number | null) {
  return useQuery({
    queryKey: queryKeys.recordingState(workshopId, recordingId, t ?? -1),
    queryFn: () =>
      api.get<{ t: number; values: Record<string, ChannelValue> }>(
        `${base(workshopId)}/recordings/${recordingId}/state?t=${Math.max(0, Math.round(t ?? 0))}`,
      ),
    enabled: t !== null,
    placeholderData: keepPreviousData,
    staleTime: Infinity,
  });
}

export const recordingDownloadUrl = (workshopId: string, recordingId: string, format: "ppr" | "csv") =>
  `/api${base(workshopId)}/recordings/${recordingId}/download?format=${format}`;

/** The file as it was uploaded (a plain link, so the browser saves it under its own name). */
export const recordingOriginalUrl = (workshopId: string, recordingId: string) => `/api${base(workshopId)}/recordings/${recordingId}/original`;

export function useRenameRecording(workshopId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: { recordingId: string; name: string }) =>
      api.patch<RecordingSummary>(`${base(workshopId)}/recordings/${input.recordingId}`, { name: input.name }),
    onSuccess: () => qc.invalidateQueries({ queryKey: queryKeys.recordings(workshopId) }),
  });
}

export function useDeleteRecording(workshopId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (recordingId: string) => api.delete(`${base(workshopId)}/recordings/${recordingId}`),
    onSuccess: (_data, recordingId) => {
      qc.removeQueries({ queryKey: queryKeys.recording(workshopId, recordingId) });
      return refreshRecordingLists(qc, workshopId);
    },
  });
}

export function useImports(workshopId: string) {
  return useQuery({
    queryKey: queryKeys.imports(workshopId),
    queryFn: () => api.get<ImportJobView[]>(`${base(workshopId)}/imports`),
    retry: false,
  });
}

const importFinished = (job: ImportJobView | undefined) => job?.state === "done" || job?.state === "failed" || job?.state === "cancelled";

/** Polls one import until it is done or failed; then refreshes the recordings table once. */
export function useImportJob(workshopId: string, job: ImportJobView) {
  const qc = useQueryClient();
  return useQuery({
    queryKey: queryKeys.importJob(workshopId, job.id),
    queryFn: async () => {
      const next = await api.get<ImportJobView>(`${base(workshopId)}/imports/${job.id}`);
      if (importFinished(next)) {
        void refreshRecordingLists(qc, workshopId);
        void qc.invalidateQueries({ queryKey: queryKeys.airframes(workshopId) });
      }
      return next;
    },
    initialData: job,
    // initialData is "fresh" forever otherwise; a running job must be asked about at once.
    initialDataUpdatedAt: importFinished(job) ? Date.now() : 0,
    staleTime: importFinished(job) ? Infinity : 0,
    refetchInterval: (q) => (importFinished(q.state.data) ? false : 500),
  });
}

/** Sends the file; `signal` aborts the transfer (the server then keeps nothing of it). */
export function useUpload(workshopId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: { file: Blob; options: UploadOptions; onProgress: (sent: number, total: number) => void; signal?: AbortSignal }) =>
      uploadBytes<ImportJobView>(`${base(workshopId)}/recordings/uploads?${uploadSearch(input.options)}`, input.file, input.onProgress, input.signal),
    onSuccess: (job) => {
      qc.setQueryData<ImportJobView[]>(queryKeys.imports(workshopId), (old) => [job, ...(old ?? []).filter((j) => j.id !== job.id)]);
      void refreshRecordingLists(qc, workshopId);
    },
  });
}

/** Cancels a queued or running import: no recording is made and the stored file is deleted. */
export function useCancelImport(workshopId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (importId: string) => api.post<ImportJobView>(`${base(workshopId)}/imports/${importId}/cancel`),
    onSuccess: (job) => {
      qc.setQueryData(queryKeys.importJob(workshopId, job.id), job);
      qc.setQueryData<ImportJobView[]>(queryKeys.imports(workshopId), (old) => (old ?? []).map((j) => (j.id === job.id ? job : j)));
      return refreshRecordingLists(qc, workshopId);
    },
  });
}

export function useSaveScenario(workshopId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: { name: string; airframeId: string; scenario: unknown }) =>
      api.post<RecordingSummary>(`${base(workshopId)}/recordings/from-scenario`, body),
    onSuccess: () => qc.invalidateQueries({ queryKey: queryKeys.recordings(workshopId) }),
  });
}

/** The start answer may carry the capture token exporters must send (shown once, kept in this tab). */
export type StartedCapture = CaptureView & { token?: string };

export function useStartCapture(workshopId: string) {
  return useMutation({
    mutationFn: (body: { name: string; airframeId: string; udpPort?: number }) =>
      api.post<StartedCapture>(`${base(workshopId)}/captures`, body),
  });
}

const captureLive = (c: CaptureView | undefined) => c?.state === "capturing";

/** Cache key of the workshop's capture list (beside each capture's own key). */
const capturesKey = (workshopId: string) => ["workshops", workshopId, "captures", "list"] as const;

/** This workshop's captures, newest first; every 2 s while one of them is listening. */
export function useCaptures(workshopId: string) {
  return useQuery({
    queryKey: capturesKey(workshopId),
    queryFn: () => api.get<CaptureView[]>(`${base(workshopId)}/captures`),
    refetchInterval: (q) => ((q.state.data ?? []).some(captureLive) ? 2000 : false),
    refetchOnMount: "always",
  });
}

/** A capture's counters and latest values, every 500 ms while it listens. */
export function useCapture(workshopId: string, captureId: string) {
  return useQuery({
    queryKey: queryKeys.capture(workshopId, captureId),
    queryFn: () => api.get<CaptureView>(`${base(workshopId)}/captures/${captureId}`),
    refetchInterval: (q) => (q.state.data === undefined || captureLive(q.state.data) ? 500 : false),
  });
}

/** Stops listening; what arrived is kept as a recording (nothing arrived: no recording). */
export function useStopCapture(workshopId: string, captureId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: () => api.post<CaptureView>(`${base(workshopId)}/captures/${captureId}/stop`),
    onSuccess: (view) => {
      qc.setQueryData(queryKeys.capture(workshopId, captureId), view);
      void qc.invalidateQueries({ queryKey: capturesKey(workshopId) });
      return refreshRecordingLists(qc, workshopId);
    },
  });
}
