import { SectionTabs } from './section-tabs';

export const TEAM_TABS = [
  { href: '/admin', label: 'Users' },
  { href: '/admin/invitations', label: 'Invitations' },
  { href: '/admin/outbox', label: 'Outbox' },
  { href: '/admin/audit', label: 'Audit log' },
] as const;

/** The admin (Team) section's page links. */
export function TeamTabs() {
  return <SectionTabs tabs={TEAM_TABS} label="Team pages" />;
}
