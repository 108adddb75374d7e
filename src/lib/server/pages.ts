/** Guards for Astro pages: the same permission checks as the API, thrown as ApiError for the middleware to answer. */
import type { AstroGlobal } from 'astro';
import { requireUser } from './http';
import { can, requireAction, requireMember, type Action, type MemberContext } from './permissions';
import type { SessionUser } from './session';

/** What a workspace page needs: the member context, the user, a `can` shortcut and the layout prop. */
export type WorkspacePage = MemberContext & {
  user: SessionUser;
  can: (action: Action) => boolean;
  layout: { slug: string; name: string; role: string };
};

/**
 * Loads a workspace page for the signed-in member: anonymous → sign-in redirect,
 * non-member → 404 page, role without `action` → 403 page (via src/middleware.ts).
 */
export async function requireWorkspacePage(
  astro: AstroGlobal,
  slug: string | undefined,
  action: Action = 'workspace.read',
): Promise<WorkspacePage> {
  const user = requireUser(astro);
  const member = await requireMember(astro.locals.db, user.id, slug ?? '');
  requireAction(member, action);
  return {
    ...member,
    user,
    can: (a) => can(member.role, a),
    layout: { slug: member.workspace.slug, name: member.workspace.name, role: member.role },
  };
}

/** The signed-in user for a page, or a redirect to sign-in (via the middleware). */
export function requirePageUser(astro: AstroGlobal): SessionUser {
  return requireUser(astro);
}
