import { keepPreviousData, useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import type { CreatedTokenView, DeviceTokenView, ExpectedView, MotionView, PanelDetail, PanelSummary } from "../../../shared/api/panels";
import type { PanelInput } from "../../../shared/panel/schema";
import { api, ApiError } from "../../lib/api";

/**
 * Server data for panels (the contract is shared/api/panels.ts). Components use these hooks and
 * never call fetch. Every key starts with ["workshops", id, "panels"], so invalidating a
 * workshop's panels refreshes lists, details, previews and tokens together.
 */

const base = (workshopId: string) => `/workshops/${workshopId}/panels`;

export const panelKeys = {
  all: (workshopId: string) => ["workshops", workshopId, "panels"] as const,
  detail: (workshopId: string, panelId: string) => ["workshops", workshopId, "panels", panelId] as const,
  expected: (workshopId: string, panelId: string, recordingId: string, updatedAt: string) =>
    ["workshops", workshopId, "panels", panelId, "expected", recordingId, updatedAt] as const,
  motion: (workshopId: string, panelId: string, elementId: string, recordingId: string, updatedAt: string) =>
    ["workshops", workshopId, "panels", panelId, "motion", elementId, recordingId, updatedAt] as const,
  tokens: (workshopId: string, panelId: string) => ["workshops", workshopId, "panels", panelId, "tokens"] as const,
};

export function usePanels(workshopId: string) {
  return useQuery({ queryKey: panelKeys.all(workshopId), queryFn: () => api.get<PanelSummary[]>(base(workshopId)) });
}

export function usePanel(workshopId: string, panelId: string) {
  return useQuery({ queryKey: panelKeys.detail(workshopId, panelId), queryFn: () => api.get<PanelDetail>(`${base(workshopId)}/${panelId}`) });
}

/** After any change: the list and this panel's detail are fetched again. */
function useSettle(workshopId: string) {
  const qc = useQueryClient();
  return (detail?: PanelDetail) => {
    if (detail) qc.setQueryData(panelKeys.detail(workshopId, detail.id), detail);
    return qc.invalidateQueries({ queryKey: panelKeys.all(workshopId) });
  };
}

export function useCreatePanel(workshopId: string) {
  const settle = useSettle(workshopId);
  return useMutation({
    mutationFn: (body: { airframeId: string; definition: unknown }) => api.post<PanelDetail>(base(workshopId), body),
    onSuccess: (d) => settle(d),
  });
}

export function useReplacePanel(workshopId: string, panelId: string) {
  const settle = useSettle(workshopId);
  return useMutation({
    mutationFn: (definition: PanelInput) => api.put<PanelDetail>(`${base(workshopId)}/${panelId}`, { definition }),
    onSuccess: (d) => settle(d),
  });
}

export function useRenamePanel(workshopId: string, panelId: string) {
  const settle = useSettle(workshopId);
  return useMutation({
    mutationFn: (name: string) => api.patch<PanelDetail>(`${base(workshopId)}/${panelId}`, { name }),
    onSuccess: (d) => settle(d),
  });
}

export function useDeletePanel(workshopId: string, panelId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: () => api.delete(`${base(workshopId)}/${panelId}`),
    onSuccess: () => {
      qc.removeQueries({ queryKey: panelKeys.detail(workshopId, panelId) });
      return qc.invalidateQueries({ queryKey: panelKeys.all(workshopId) });
    },
  });
}

export function useCopyPanel(workshopId: string, panelId: string, how: "duplicate" | "mirror") {
  const settle = useSettle(workshopId);
  return useMutation({
    mutationFn: (body: { name?: string; slug?: string; channelMap?: Record<string, string> }) =>
      api.post<PanelDetail>(`${base(workshopId)}/${panelId}/${how}`, body),
    onSuccess: (d) => settle(d),
  });
}

/** PUT raw bytes; the server sniffs the type and scales the photo. */
export function useUploadPhoto(workshopId: string, panelId: string) {
  const settle = useSettle(workshopId);
  return useMutation({
    mutationFn: async (file: Blob) => {
      let response: Response;
      try {
        response = await fetch(`/api${base(workshopId)}/${panelId}/photo`, {
          method: "PUT",
          credentials: "same-origin",
          headers: { "content-type": file.type || "application/octet-stream" },
          body: file,
        });
      } catch {
        throw new ApiError(0, "unavailable", "The photo did not reach the Panelproof server. Is it running?");
      }
      const data = await response.json().catch(() => undefined);
      if (!response.ok) {
        const error = data?.error;
        throw new ApiError(response.status, error?.code ?? "internal", error?.message ?? response.statusText, error?.issues);
      }
      return data as PanelDetail;
    },
    onSuccess: (d) => settle(d),
  });
}

export function useSaveMarkers(workshopId: string, panelId: string) {
  const settle = useSettle(workshopId);
  return useMutation({
    mutationFn: (markers: Record<string, { x: number; y: number }>) => api.put<PanelDetail>(`${base(workshopId)}/${panelId}/markers`, { markers }),
    onSuccess: (d) => settle(d),
  });
}

/** Expected timelines for a preview; keyed by the panel's last change so an edit recomputes. */
export function useExpected(workshopId: string, panelId: string, recordingId: string | null, updatedAt: string) {
  return useQuery({
    queryKey: panelKeys.expected(workshopId, panelId, recordingId ?? "", updatedAt),
    queryFn: () => api.get<ExpectedView>(`${base(workshopId)}/${panelId}/expected?recordingId=${encodeURIComponent(recordingId ?? "")}`),
    enabled: !!recordingId,
    placeholderData: keepPreviousData,
    staleTime: Infinity,
  });
}

/**
 * Motion demand of one pointer's saved motor over a recording. Keyed by the panel's `updatedAt`
 * like the preview, so saving another motor asks again.
 */
export function useMotion(workshopId: string, panelId: string, elementId: string, recordingId: string | null, updatedAt: string) {
  return useQuery({
    queryKey: panelKeys.motion(workshopId, panelId, elementId, recordingId ?? "", updatedAt),
    queryFn: () =>
      api.get<MotionView>(`${base(workshopId)}/${panelId}/elements/${encodeURIComponent(elementId)}/motion?recordingId=${encodeURIComponent(recordingId ?? "")}`),
    enabled: !!recordingId,
    staleTime: Infinity,
  });
}

export function useTokens(workshopId: string, panelId: string) {
  return useQuery({ queryKey: panelKeys.tokens(workshopId, panelId), queryFn: () => api.get<DeviceTokenView[]>(`${base(workshopId)}/${panelId}/tokens`) });
}

export function useCreateToken(workshopId: string, panelId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (label: string) => api.post<CreatedTokenView>(`${base(workshopId)}/${panelId}/tokens`, { label }),
    onSuccess: () => qc.invalidateQueries({ queryKey: panelKeys.tokens(workshopId, panelId) }),
  });
}

export function useRevokeToken(workshopId: string, panelId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (tokenId: string) => api.post<DeviceTokenView>(`${base(workshopId)}/${panelId}/tokens/${tokenId}/revoke`),
    onSuccess: () => qc.invalidateQueries({ queryKey: panelKeys.tokens(workshopId, panelId) }),
  });
}

/** Plain links, so the browser saves the file. */
export const panelFileUrls = (workshopId: string, panelId: string) => ({
  json: `/api${base(workshopId)}/${panelId}/export.json`,
  header: `/api${base(workshopId)}/${panelId}/device-header.h`,
});

export const photoUrl = (workshopId: string, panelId: string, version: string) =>
  `/api${base(workshopId)}/${panelId}/photo?v=${encodeURIComponent(version)}`;
