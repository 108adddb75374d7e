/** TanStack Query hooks for accounts, workspaces, members and the audit log (foundation API under /api/v1). */
import { useInfiniteQuery, useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import { apiJson } from './api';

/** The signed-in user as /api/v1/me sends it. */
export interface MeView {
  user: { id: string; email: string; displayName: string; emailVerified: boolean } | null;
  demo: boolean;
}

/** One audit entry as the API sends it. */
export interface AuditItemView {
  id: number;
  action: string;
  target: string;
  detail: Record<string, unknown>;
  at: string;
  actorName: string | null;
  actorEmail: string | null;
  actorKeyId: string | null;
  targetName: string | null;
}

/** One page of the audit log. */
export interface AuditPageView {
  items: AuditItemView[];
  nextBefore: number | null;
}

/** One member as the API sends it. */
export interface MemberView {
  userId: string;
  email: string;
  displayName: string;
  role: 'owner' | 'editor' | 'reviewer' | 'viewer';
  since: string;
}

/** The API path of a workspace. */
export function workspacePath(workspace: string): string {
  return `/api/v1/workspaces/${encodeURIComponent(workspace)}`;
}

/** The signed-in user. */
export function useMe() {
  return useQuery({ queryKey: ['me'], queryFn: () => apiJson<MeView>('/api/v1/me') });
}

/** The audit log of a workspace, newest first, a page at a time. */
export function useAuditLog(workspace: string, initial?: AuditPageView) {
  return useInfiniteQuery({
    queryKey: ['audit', workspace],
    initialPageParam: null as number | null,
    queryFn: ({ pageParam }) =>
      apiJson<AuditPageView>(`${workspacePath(workspace)}/audit${pageParam === null ? '' : `?before=${pageParam}`}`),
    getNextPageParam: (last) => last.nextBefore,
    ...(initial ? { initialData: { pages: [initial], pageParams: [null] } } : {}),
  });
}

/** The members of a workspace. */
export function useMembers(workspace: string) {
  return useQuery({
    queryKey: ['members', workspace],
    queryFn: () => apiJson<{ members: MemberView[] }>(`${workspacePath(workspace)}/members`),
  });
}

/** Changes a member's role (owners). */
export function useChangeRole(workspace: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (v: { userId: string; role: MemberView['role'] }) =>
      apiJson<{ ok: true }>(`${workspacePath(workspace)}/members/${encodeURIComponent(v.userId)}`, {
        method: 'PATCH',
        body: { role: v.role },
      }),
    onSuccess: () => qc.invalidateQueries({ queryKey: ['members', workspace] }),
  });
}
