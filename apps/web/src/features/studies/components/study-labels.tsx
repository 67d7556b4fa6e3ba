import type { StudySummary } from '@counterpoise/contracts/studies';
import { Badge, type BadgeTone } from '../../../components/ui/badge.js';

const kindLabel: Record<StudySummary['kind'], string> = {
  randomized_trial: 'Randomized trial',
  observational_cohort: 'Observational cohort',
};

const blindingLabel: Record<StudySummary['blinding'], string> = {
  blinded: 'Blinded',
  open_label: 'Open label',
};

const statusLabel: Record<StudySummary['status'], { text: string; tone: BadgeTone }> = {
  setup: { text: 'In set-up', tone: 'neutral' },
  enrolling: { text: 'Enrolling', tone: 'moss' },
  closed: { text: 'Closed', tone: 'neutral' },
};

const roleLabel: Record<string, string> = {
  admin: 'Administrator',
  coordinator: 'Site coordinator',
  statistician: 'Statistician',
  sponsor: 'Sponsor',
  auditor: 'Auditor',
};

export function KindBadge({ kind }: { kind: StudySummary['kind'] }) {
  return <Badge tone={kind === 'randomized_trial' ? 'spruce' : 'harbor'}>{kindLabel[kind]}</Badge>;
}

export function BlindingBadge({ blinding }: { blinding: StudySummary['blinding'] }) {
  return <Badge tone={blinding === 'blinded' ? 'clay' : 'neutral'}>{blindingLabel[blinding]}</Badge>;
}

export function StatusBadge({ status }: { status: StudySummary['status'] }) {
  const s = statusLabel[status];
  return <Badge tone={s.tone}>{s.text}</Badge>;
}

/** `myRole` may join several roles with "+" (e.g. "statistician+auditor"). */
export function describeRole(myRole: string): string {
  return myRole
    .split('+')
    .map((r) => roleLabel[r] ?? r)
    .join(', ');
}
