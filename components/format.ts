/** Date-time as "2026-12-01 20:15 UTC" (the server stores ISO strings in UTC). */
export function formatWhen(iso: string | null | undefined): string {
  if (!iso) return '—';
  const d = new Date(iso);
  if (Number.isNaN(d.getTime())) return iso;
  return `${d.toISOString().slice(0, 16).replace('T', ' ')} UTC`;
}

export type InvitationState = 'pending' | 'accepted' | 'expired';

export function invitationState(inv: { acceptedAt: string | null; expiresAt: string }, now = Date.now()): InvitationState {
  if (inv.acceptedAt) return 'accepted';
  return new Date(inv.expiresAt).getTime() <= now ? 'expired' : 'pending';
}
