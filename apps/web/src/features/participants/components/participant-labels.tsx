import type { ParticipantStatus } from '@counterpoise/contracts/participants';
import { Badge, type BadgeTone } from '../../../components/ui/badge.js';

export const participantStatusLabel: Record<ParticipantStatus, { text: string; tone: BadgeTone }> = {
  screened: { text: 'Screened, eligible', tone: 'harbor' },
  screen_failed: { text: 'Screen failure', tone: 'brick' },
  enrolled: { text: 'Enrolled', tone: 'moss' },
  withdrawn: { text: 'Withdrawn', tone: 'neutral' },
};

export function ParticipantStatusBadge({ status }: { status: ParticipantStatus }) {
  const s = participantStatusLabel[status];
  return <Badge tone={s.tone}>{s.text}</Badge>;
}

/** UTC "2026-03-14 09:12Z"; dates are stored and compared in UTC. */
export function utcStamp(iso: string | null | undefined): string {
  if (!iso) return '—';
  const d = new Date(iso);
  if (Number.isNaN(d.getTime())) return iso;
  return `${d.toISOString().slice(0, 16).replace('T', ' ')}Z`;
}

export function utcDate(iso: string | null | undefined): string {
  if (!iso) return '—';
  const d = new Date(iso);
  return Number.isNaN(d.getTime()) ? iso : d.toISOString().slice(0, 10);
}
