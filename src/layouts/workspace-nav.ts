/** One tab of the workspace navigation bar. */
export type WorkspaceTab = {
  /** Stable id used by pages to mark the current tab (`section` prop of AppLayout). */
  id: string;
  label: string;
  /** Path below `/w/{slug}`; '' is the workspace home. */
  path: string;
  /** Only shown to owners. */
  ownerOnly?: boolean;
};

/** Workspace tabs in display order; modules add their own entries here. */
export const WORKSPACE_TABS: WorkspaceTab[] = [
  { id: 'controllers', label: 'Controllers', path: '' },
  { id: 'members', label: 'Members', path: '/members' },
  { id: 'audit', label: 'Audit log', path: '/audit', ownerOnly: true },
  { id: 'keys', label: 'CI keys', path: '/keys', ownerOnly: true },
  { id: 'api', label: 'API', path: '/api' },
  { id: 'settings', label: 'Settings', path: '/settings' },
];
