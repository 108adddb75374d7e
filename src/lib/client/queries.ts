/** TanStack Query hooks for controllers and revisions: the only way islands talk to /api/*. */
import { useMutation, useQuery, useQueryClient } from '@tanstack/react-query';
import type { SourceFormat } from '../engine/formats';
import { apiBlob, apiJson, controllerPath, controllersPath } from './api';

/** One row of the controller list, as the API sends it. */
export interface ControllerListItem {
  id: string;
  slug: string;
  name: string;
  description: string;
  head: number;
  findings: { error: number; warning: number; info: number } | null;
  lastRelease: { label: string; revision: number; publishedAt: string } | null;
  changedBy: string | null;
  changedAt: string;
  archived: boolean;
}

/** A saved revision, as the save answer sends it. */
export interface SavedRevision {
  number: number;
  base: number | null;
  findings: { error: number; warning: number; info: number };
  source: string;
  createdAt: string;
}

/** The controller list of a workspace. */
export function useControllers(workspace: string, includeArchived: boolean) {
  return useQuery({
    queryKey: ['controllers', workspace, includeArchived],
    queryFn: () => apiJson<{ controllers: ControllerListItem[]; role: string }>(`${controllersPath(workspace)}${includeArchived ? '?archived=1' : ''}`),
  });
}

/** Creates a controller (blank, starter or upload). */
export function useCreateController(workspace: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (body: { name: string; kind: 'blank' | 'starter' | 'upload'; upload?: { filename: string; text: string; format?: SourceFormat } }) =>
      apiJson<{ controller: { slug: string }; url: string }>(controllersPath(workspace), { body }),
    onSuccess: () => qc.invalidateQueries({ queryKey: ['controllers', workspace] }),
  });
}

/** Renames or archives/restores a controller. */
export function useUpdateController(workspace: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (v: { slug: string; name?: string; archived?: boolean }) =>
      apiJson(controllerPath(workspace, v.slug), { method: 'PATCH', body: { ...(v.name !== undefined ? { name: v.name } : {}), ...(v.archived !== undefined ? { archived: v.archived } : {}) } }),
    onSuccess: () => qc.invalidateQueries({ queryKey: ['controllers', workspace] }),
  });
}

/** Saves a new revision on a base; a stale base rejects with ApiClientError status 409 and detail.head. */
export function useSaveRevision(workspace: string, controller: string) {
  const qc = useQueryClient();
  return useMutation({
    mutationFn: (v: { base: number; source: string; message: string }) => apiJson<{ revision: SavedRevision }>(`${controllerPath(workspace, controller)}/revisions`, { body: v }),
    onSuccess: () => {
      void qc.invalidateQueries({ queryKey: ['controllers', workspace] });
      void qc.invalidateQueries({ queryKey: ['revision', workspace, controller] });
    },
  });
}

/** One revision's source (e.g. the head, when a save met a stale base). */
export function useRevision(workspace: string, controller: string, number: number | null) {
  return useQuery({
    queryKey: ['revision', workspace, controller, number],
    enabled: number !== null && number > 0,
    queryFn: () => apiJson<{ revision: { number: number; source: string; message: string; author: string | null; createdAt: string } }>(`${controllerPath(workspace, controller)}/revisions/${number}`),
  });
}

/** One generated file of a preview. */
export interface GeneratedFile {
  path: string;
  text: string;
  size: number;
}

/** Preview of the generated files for the current draft source and a target. */
export function useGeneratePreview(workspace: string, controller: string, source: string, target: 'c' | 'rust', revision: string, enabled: boolean) {
  return useQuery({
    queryKey: ['generate', workspace, controller, target, revision, source],
    enabled,
    staleTime: Infinity,
    queryFn: ({ signal }) =>
      apiJson<{ files: GeneratedFile[]; sha256: string; zipBytes: number; footprint: { cells: number; stateBytes: number; outputEntryBytes: number; tableBytes: number; codeBytes: number; codeBasis: string } }>(`${controllerPath(workspace, controller)}/generate`, {
        body: { source, target, revision },
        signal,
      }),
  });
}

/** Fetches the zip of the current draft source for a target (the caller saves the blob). */
export function useDownloadBundle(workspace: string, controller: string) {
  return useMutation({
    mutationFn: (v: { source: string; target: 'c' | 'rust'; revision: string }) => apiBlob(`${controllerPath(workspace, controller)}/generate?download=1`, { body: v }),
  });
}
