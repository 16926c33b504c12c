import { useQuery } from "@tanstack/react-query";
import type { RunDetail } from "../../../shared/api/runs";
import type { SerialPortList } from "../../../shared/api/bench";
import { api } from "../../lib/api";
import { runKeys } from "./queries";

/** The bench machine's serial ports, for the link form (builders and owners only). */
export function useSerialPorts(workshopId: string, enabled = true) {
  return useQuery({
    queryKey: ["workshops", workshopId, "bench", "serial-ports"] as const,
    queryFn: () => api.get<SerialPortList>(`/workshops/${workshopId}/bench/serial-ports`),
    enabled,
    staleTime: 5000,
  });
}

/**
 * The run's detail, read again every couple of seconds: a virtual panel in its own window picks
 * up faults changed from the console while the run plays.
 */
export function useRunFollowing(workshopId: string, runId: string) {
  return useQuery({
    queryKey: runKeys.detail(workshopId, runId),
    queryFn: () => api.get<RunDetail>(`/workshops/${workshopId}/runs/${runId}`),
    refetchInterval: 2000,
  });
}
