import { queryOptions, useMutation, useQuery, useQueryClient } from "@tanstack/react-query";
import type {
  ChangeRoleBody,
  CreateInvitationBody,
  CreateWorkshopBody,
  HealthView,
  InvitationPreview,
  InvitationView,
  MeView,
  MemberView,
  OutboxMessageView,
  WorkshopDetail,
} from "../../shared/api/workshops";
import { ApiError, api } from "./api";
import { authClient, unwrap } from "./auth-client";
import { queryKeys } from "./query-keys";

/** The signed-in person, or null when nobody is signed in. */
export const meQuery = queryOptions({
  queryKey: queryKeys.me,
  queryFn: async () => {
    try {
      return await api.get<MeView>("/me");
    } catch (err) {
      if (err instanceof ApiError && err.status === 401) return null;
      throw err;
    }
  },
});

export function useMe() {
  return useQuery(meQuery);
}

export const healthQuery = queryOptions({ queryKey: queryKeys.health, queryFn: () => api.get<HealthView>("/health"), staleTime: 60_000 });

export function useHealth() {
  return useQuery(healthQuery);
}

export const workshopQuery = (id: string) => queryOptions({ queryKey: queryKeys.workshop(id), queryFn: () => api.get<WorkshopDetail>(`/workshops/${id}`) });

export function useWorkshop(id: string) {
  return useQuery(workshopQuery(id));
}

export function useMembers(id: string) {
  return useQuery({ queryKey: queryKeys.members(id), queryFn: () => api.get<MemberView[]>(`/workshops/${id}/members`) });
}

export function useInvitations(id: string, enabled: boolean) {
  return useQuery({
    queryKey: queryKeys.invitations(id),
    queryFn: () => api.get<InvitationView[]>(`/workshops/${id}/invitations`),
    enabled,
  });
}

export function useInvitationPreview(id: string) {
  return useQuery({ queryKey: queryKeys.invitationPreview(id), queryFn: () => api.get<InvitationPreview>(`/invitations/${id}`), retry: false });
}

export function useOutbox() {
  return useQuery({ queryKey: queryKeys.outbox, queryFn: () => api.get<OutboxMessageView[]>("/outbox"), refetchInterval: 3000, retry: false });
}

export function useSignIn() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: { email: string; password: string }) => unwrap(authClient.signIn.email(input)),
    // Drop the cached "nobody signed in" so the next page asks the server afresh.
    onSuccess: () => qc.removeQueries({ queryKey: queryKeys.me }),
  });
}

export function useSignUp() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: { name: string; email: string; password: string }) => unwrap(authClient.signUp.email(input)),
    onSuccess: () => qc.removeQueries({ queryKey: queryKeys.me }),
  });
}

export function useSignOut() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: () => unwrap(authClient.signOut()),
    onSuccess: () => qc.clear(),
  });
}

export function useRequestPasswordReset() {
  return useMutation({
    mutationFn: (email: string) =>
      unwrap(authClient.requestPasswordReset({ email, redirectTo: `${window.location.origin}/reset-password` })),
  });
}

export function useResetPassword() {
  return useMutation({
    mutationFn: (input: { token: string; newPassword: string }) => unwrap(authClient.resetPassword(input)),
  });
}

export function useCreateWorkshop() {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: CreateWorkshopBody) => api.post<WorkshopDetail>("/workshops", body),
    onSuccess: () => qc.invalidateQueries({ queryKey: queryKeys.me }),
  });
}

export function useInvite(workshopId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: CreateInvitationBody) => api.post<InvitationView>(`/workshops/${workshopId}/invitations`, body),
    onSuccess: () => qc.invalidateQueries({ queryKey: queryKeys.invitations(workshopId) }),
  });
}

export function useCancelInvitation(workshopId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (invitationId: string) => api.delete(`/workshops/${workshopId}/invitations/${invitationId}`),
    onSuccess: () => qc.invalidateQueries({ queryKey: queryKeys.invitations(workshopId) }),
  });
}

export function useChangeRole(workshopId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (input: { memberId: string } & ChangeRoleBody) =>
      api.patch(`/workshops/${workshopId}/members/${input.memberId}`, { role: input.role }),
    onSuccess: () => qc.invalidateQueries({ queryKey: queryKeys.members(workshopId) }),
  });
}

export function useRemoveMember(workshopId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (memberId: string) => api.delete(`/workshops/${workshopId}/members/${memberId}`),
    onSuccess: () => qc.invalidateQueries({ queryKey: queryKeys.members(workshopId) }),
  });
}

export function useRespondToInvitation(invitationId: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (action: "accept" | "decline") =>
      api.post<{ workshopId?: string | null; status: string }>(`/invitations/${invitationId}/${action}`),
    onSuccess: () => {
      qc.removeQueries({ queryKey: queryKeys.me });
      qc.invalidateQueries({ queryKey: queryKeys.invitationPreview(invitationId) });
    },
  });
}

export function useClearOutbox() {
  const qc = useQueryClient();
  return useMutation({ mutationFn: () => api.delete("/outbox"), onSuccess: () => qc.invalidateQueries({ queryKey: queryKeys.outbox }) });
}
