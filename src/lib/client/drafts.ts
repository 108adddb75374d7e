/**
 * Local drafts: the source being edited, kept in localStorage per controller and base revision,
 * so a closed tab or an expired session never loses edits. Cleared after a successful save.
 */

/** A stored draft. */
export interface Draft {
  source: string;
  savedAt: string;
  base: number;
}

const PREFIX = 'quiesce-draft:';

/** The storage key of a controller's draft on a base revision. */
export function draftKey(workspace: string, controller: string, base: number): string {
  return `${PREFIX}${workspace}/${controller}@r${base}`;
}

function storage(): Storage | null {
  try {
    return typeof localStorage !== 'undefined' ? localStorage : null;
  } catch {
    return null;
  }
}

/** Reads a draft, or null. */
export function readDraft(workspace: string, controller: string, base: number): Draft | null {
  const raw = storage()?.getItem(draftKey(workspace, controller, base));
  if (!raw) return null;
  try {
    const d = JSON.parse(raw) as Partial<Draft>;
    return typeof d.source === 'string' && typeof d.savedAt === 'string' ? { source: d.source, savedAt: d.savedAt, base } : null;
  } catch {
    return null;
  }
}

/** Writes a draft (quota errors are reported, not thrown). */
export function writeDraft(workspace: string, controller: string, base: number, source: string): boolean {
  try {
    storage()?.setItem(draftKey(workspace, controller, base), JSON.stringify({ source, savedAt: new Date().toISOString(), base }));
    return true;
  } catch {
    return false;
  }
}

/** Removes a draft. */
export function clearDraft(workspace: string, controller: string, base: number): void {
  storage()?.removeItem(draftKey(workspace, controller, base));
}

/** Every draft of a controller, on any base (newest base first). */
export function listDrafts(workspace: string, controller: string): Draft[] {
  const s = storage();
  if (!s) return [];
  const head = `${PREFIX}${workspace}/${controller}@r`;
  const out: Draft[] = [];
  for (let i = 0; i < s.length; i++) {
    const k = s.key(i);
    if (!k || !k.startsWith(head)) continue;
    const base = Number(k.slice(head.length));
    const d = readDraft(workspace, controller, base);
    if (d) out.push(d);
  }
  return out.sort((a, b) => b.base - a.base);
}
