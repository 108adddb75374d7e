/** Controllers of a workspace as listed on the workspace home. */
import { and, asc, eq, isNull } from 'drizzle-orm';
import type { Db } from './db';
import { controllers, revisions, users, type FindingsSummary } from './schema';

/** A controller row with its head revision's facts. */
export type ControllerListItem = {
  id: string;
  slug: string;
  name: string;
  description: string;
  headRevision: number;
  archived: boolean;
  findings: FindingsSummary | null;
  lastAuthor: string | null;
  updatedAt: Date;
};

/** Lists a workspace's controllers (without archived ones unless asked), by name. */
export async function listControllers(
  db: Db,
  workspaceId: string,
  options: { includeArchived?: boolean } = {},
): Promise<ControllerListItem[]> {
  const rows = await db
    .select({
      id: controllers.id,
      slug: controllers.slug,
      name: controllers.name,
      description: controllers.description,
      headRevision: controllers.headRevision,
      archivedAt: controllers.archivedAt,
      updatedAt: controllers.updatedAt,
      findings: revisions.findings,
      revisionAt: revisions.createdAt,
      lastAuthor: users.displayName,
    })
    .from(controllers)
    .leftJoin(revisions, and(eq(revisions.controllerId, controllers.id), eq(revisions.number, controllers.headRevision)))
    .leftJoin(users, eq(users.id, revisions.authorId))
    .where(options.includeArchived ? eq(controllers.workspaceId, workspaceId) : and(eq(controllers.workspaceId, workspaceId), isNull(controllers.archivedAt)))
    .orderBy(asc(controllers.name));
  return rows.map((r) => ({
    id: r.id,
    slug: r.slug,
    name: r.name,
    description: r.description,
    headRevision: r.headRevision,
    archived: r.archivedAt !== null,
    findings: r.findings ?? null,
    lastAuthor: r.lastAuthor ?? null,
    updatedAt: r.revisionAt ?? r.updatedAt,
  }));
}
