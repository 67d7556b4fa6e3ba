import type { StudySummary } from '@counterpoise/contracts/studies';
import { Card, CardBody, CardHeader } from '../../../components/ui/card.js';
import { Callout } from '../../../components/ui/callout.js';
import { ProgressMeter } from '../../../components/ui/progress-meter.js';
import { BlindingBadge, describeRole, KindBadge, StatusBadge } from './study-labels.js';
import { Fact } from '../../../components/ui/fact.js';


/** Pooled facts only: nothing here is broken down by arm, so every role may see it. */
export function StudyOverview({ study }: { study: StudySummary }) {
  const share = study.targetSampleSize > 0 ? Math.round((study.enrolled / study.targetSampleSize) * 100) : 0;
  return (
    <div className="grid gap-5 lg:grid-cols-3">
      <Card className="lg:col-span-2">
        <CardHeader title="Enrollment" description="All sites pooled, against the target sample size." />
        <CardBody className="flex flex-col gap-4">
          <p className="flex items-baseline gap-2">
            <span className="figure text-4xl font-medium text-ink">
              {study.enrolled.toLocaleString('en')}
            </span>
            <span className="text-graphite">
              of <span className="figure">{study.targetSampleSize.toLocaleString('en')}</span> participants
              {study.targetSampleSize > 0 && (
                <>
                  {' '}
                  (<span className="figure">{share}%</span>)
                </>
              )}
            </span>
          </p>
          <ProgressMeter
            value={study.enrolled}
            max={study.targetSampleSize}
            label="Enrollment against target"
            showFigures={false}
          />
        </CardBody>
      </Card>
      <Card>
        <CardHeader title="Study" />
        <CardBody>
          <dl className="grid grid-cols-1 gap-4">
            <Fact label="Design">
              <div className="flex flex-wrap gap-1.5">
                <KindBadge kind={study.kind} />
                <BlindingBadge blinding={study.blinding} />
              </div>
            </Fact>
            <Fact label="Status">
              <StatusBadge status={study.status} />
            </Fact>
            <Fact label="Sites">
              <span className="figure">{study.siteCount}</span>
            </Fact>
            <Fact label="Your role">{describeRole(study.myRole)}</Fact>
          </dl>
        </CardBody>
      </Card>
      {study.blinding === 'blinded' && (
        <Callout tone="info" className="lg:col-span-3" title="Blinded study">
          Figures broken down by arm are shown only to the unblinded statistician. Everyone else sees pooled
          figures.
        </Callout>
      )}
    </div>
  );
}
