import { Slot } from 'expo-router';
import { RoleGate } from '../../../components/role-gate';

export default function AdminLayout() {
  return (
    <RoleGate roles={['admin']} title="Team">
      <Slot />
    </RoleGate>
  );
}
