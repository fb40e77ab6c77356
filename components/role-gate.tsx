import type { ReactNode } from 'react';
import type { User } from '../shared/auth';
import { ROLE_LABELS, type Role } from '../shared/roles';
import { useMe } from '../hooks/use-session';
import { Button } from './button';
import { EmptyState } from './empty-state';
import { Screen } from './screen';

/** Renders children only for the given roles; others see why (the server enforces the same rule). */
export function RoleGate({ roles, title, children }: { roles: readonly Role[]; title: string; children: ReactNode | ((user: User) => ReactNode) }) {
  const me = useMe().data;
  if (!me) return null;
  if (!roles.includes(me.role)) {
    const who = roles.map((r) => ROLE_LABELS[r].toLowerCase() + 's').join(' and ');
    return (
      <Screen title={title}>
        <EmptyState
          title="Not part of your role"
          body={`This section is for ${who}. You are signed in as ${ROLE_LABELS[me.role].toLowerCase()}; ask an admin if you need a different role.`}
          action={<Button label="Go to Home" href="/" />}
        />
      </Screen>
    );
  }
  return <>{typeof children === 'function' ? children(me) : children}</>;
}
