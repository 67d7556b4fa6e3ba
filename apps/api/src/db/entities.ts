import { EntitySchema } from 'typeorm';

/*
 * TypeORM entities, declared as schemas rather than decorators so that every runner
 * (tsx, vitest, compiled output) sees the same explicit column types.
 * The migrations are the source of truth for the schema; these map it for queries.
 */

export type UserStatus = 'invited' | 'active' | 'disabled';
export type UserRow = {
  id: string;
  email: string;
  displayName: string;
  passwordHash: string | null;
  isAdmin: boolean;
  status: UserStatus;
  createdAt: Date;
  updatedAt: Date;
};
export const UserEntity = new EntitySchema<UserRow>({
  name: 'User',
  tableName: 'app_user',
  columns: {
    id: { type: 'uuid', primary: true, generated: 'uuid' },
    email: { type: 'text' },
    displayName: { type: 'text', name: 'display_name' },
    passwordHash: { type: 'text', name: 'password_hash', nullable: true },
    isAdmin: { type: 'boolean', name: 'is_admin' },
    status: { type: 'text' },
    createdAt: { type: 'timestamptz', name: 'created_at', createDate: true },
    updatedAt: { type: 'timestamptz', name: 'updated_at', updateDate: true },
  },
});

export type StudyKind = 'randomized_trial' | 'observational_cohort';
export type Blinding = 'blinded' | 'open_label';
export type StudyRow = {
  id: string;
  code: string;
  title: string;
  kind: StudyKind;
  blinding: Blinding;
  status: 'setup' | 'enrolling' | 'closed';
  targetSampleSize: number;
  designVersion: number;
  design: Record<string, unknown>;
  createdAt: Date;
  updatedAt: Date;
};
export const StudyEntity = new EntitySchema<StudyRow>({
  name: 'Study',
  tableName: 'study',
  columns: {
    id: { type: 'uuid', primary: true, generated: 'uuid' },
    code: { type: 'text' },
    title: { type: 'text' },
    kind: { type: 'text' },
    blinding: { type: 'text' },
    status: { type: 'text' },
    targetSampleSize: { type: 'integer', name: 'target_sample_size' },
    designVersion: { type: 'integer', name: 'design_version' },
    design: { type: 'jsonb' },
    createdAt: { type: 'timestamptz', name: 'created_at', createDate: true },
    updatedAt: { type: 'timestamptz', name: 'updated_at', updateDate: true },
  },
});

export type SiteRow = {
  id: string;
  studyId: string;
  code: string;
  name: string;
  enrollmentTarget: number;
  status: 'active' | 'paused' | 'closed';
};
export const SiteEntity = new EntitySchema<SiteRow>({
  name: 'Site',
  tableName: 'site',
  columns: {
    id: { type: 'uuid', primary: true, generated: 'uuid' },
    studyId: { type: 'uuid', name: 'study_id' },
    code: { type: 'text' },
    name: { type: 'text' },
    enrollmentTarget: { type: 'integer', name: 'enrollment_target' },
    status: { type: 'text' },
  },
});

export type ArmRow = { id: string; studyId: string; code: string; name: string; ratio: number; position: number };
export const ArmEntity = new EntitySchema<ArmRow>({
  name: 'Arm',
  tableName: 'arm',
  columns: {
    id: { type: 'uuid', primary: true, generated: 'uuid' },
    studyId: { type: 'uuid', name: 'study_id' },
    code: { type: 'text' },
    name: { type: 'text' },
    ratio: { type: 'integer' },
    position: { type: 'integer' },
  },
});

export type StudyRoleName = 'coordinator' | 'statistician' | 'sponsor' | 'auditor';
export type MembershipRow = {
  id: string;
  userId: string;
  studyId: string;
  role: StudyRoleName;
  siteIds: string[];
  createdAt: Date;
};
export const MembershipEntity = new EntitySchema<MembershipRow>({
  name: 'Membership',
  tableName: 'membership',
  columns: {
    id: { type: 'uuid', primary: true, generated: 'uuid' },
    userId: { type: 'uuid', name: 'user_id' },
    studyId: { type: 'uuid', name: 'study_id' },
    role: { type: 'text' },
    siteIds: { type: 'uuid', array: true, name: 'site_ids' },
    createdAt: { type: 'timestamptz', name: 'created_at', createDate: true },
  },
});

export type CovariateKind = 'continuous' | 'binary' | 'categorical';
export type CovariateRow = {
  id: string;
  studyId: string;
  key: string;
  label: string;
  kind: CovariateKind;
  unit: string | null;
  minValue: number | null;
  maxValue: number | null;
  decimals: number | null;
  levels: string[] | null;
  required: boolean;
  windowDaysBefore: number;
  windowDaysAfter: number;
  isStratification: boolean;
  isAdjustment: boolean;
  isOutcomeBaseline: boolean;
  reliability: number | null;
  position: number;
};
export const CovariateEntity = new EntitySchema<CovariateRow>({
  name: 'CovariateDefinition',
  tableName: 'covariate_definition',
  columns: {
    id: { type: 'uuid', primary: true, generated: 'uuid' },
    studyId: { type: 'uuid', name: 'study_id' },
    key: { type: 'text' },
    label: { type: 'text' },
    kind: { type: 'text' },
    unit: { type: 'text', nullable: true },
    minValue: { type: 'double precision', name: 'min_value', nullable: true },
    maxValue: { type: 'double precision', name: 'max_value', nullable: true },
    decimals: { type: 'integer', nullable: true },
    levels: { type: 'text', array: true, nullable: true },
    required: { type: 'boolean' },
    windowDaysBefore: { type: 'integer', name: 'window_days_before' },
    windowDaysAfter: { type: 'integer', name: 'window_days_after' },
    isStratification: { type: 'boolean', name: 'is_stratification' },
    isAdjustment: { type: 'boolean', name: 'is_adjustment' },
    isOutcomeBaseline: { type: 'boolean', name: 'is_outcome_baseline' },
    reliability: { type: 'double precision', nullable: true },
    position: { type: 'integer' },
  },
});

export type ParticipantStatus = 'screened' | 'screen_failed' | 'enrolled' | 'withdrawn';
export type ParticipantRow = {
  id: string;
  studyId: string;
  siteId: string;
  code: string;
  status: ParticipantStatus;
  screenedAt: Date | null;
  enrolledAt: Date | null;
  withdrawnAt: Date | null;
  withdrawalReason: string | null;
  consentDate: string | null;
  consentVersion: string | null;
  exposureArmId: string | null;
  importKey: string | null;
  createdAt: Date;
  updatedAt: Date;
};
export const ParticipantEntity = new EntitySchema<ParticipantRow>({
  name: 'Participant',
  tableName: 'participant',
  columns: {
    id: { type: 'uuid', primary: true, generated: 'uuid' },
    studyId: { type: 'uuid', name: 'study_id' },
    siteId: { type: 'uuid', name: 'site_id' },
    code: { type: 'text' },
    status: { type: 'text' },
    screenedAt: { type: 'timestamptz', name: 'screened_at', nullable: true },
    enrolledAt: { type: 'timestamptz', name: 'enrolled_at', nullable: true },
    withdrawnAt: { type: 'timestamptz', name: 'withdrawn_at', nullable: true },
    withdrawalReason: { type: 'text', name: 'withdrawal_reason', nullable: true },
    consentDate: { type: 'date', name: 'consent_date', nullable: true },
    consentVersion: { type: 'text', name: 'consent_version', nullable: true },
    exposureArmId: { type: 'uuid', name: 'exposure_arm_id', nullable: true },
    importKey: { type: 'text', name: 'import_key', nullable: true },
    createdAt: { type: 'timestamptz', name: 'created_at', createDate: true },
    updatedAt: { type: 'timestamptz', name: 'updated_at', updateDate: true },
  },
});

export type BaselineValueRow = {
  participantId: string;
  covariateId: string;
  valueNumber: number | null;
  valueText: string | null;
  measuredOn: string;
  updatedAt: Date;
};
export const BaselineValueEntity = new EntitySchema<BaselineValueRow>({
  name: 'BaselineValue',
  tableName: 'baseline_value',
  columns: {
    participantId: { type: 'uuid', primary: true, name: 'participant_id' },
    covariateId: { type: 'uuid', primary: true, name: 'covariate_id' },
    valueNumber: { type: 'double precision', name: 'value_number', nullable: true },
    valueText: { type: 'text', name: 'value_text', nullable: true },
    measuredOn: { type: 'date', name: 'measured_on' },
    updatedAt: { type: 'timestamptz', name: 'updated_at', updateDate: true },
  },
});

export type AllocationRow = {
  id: string;
  participantId: string;
  studyId: string;
  armId: string;
  stratumKey: string;
  position: number;
  kitCode: string;
  algorithm: string;
  algorithmVersion: string;
  designVersion: number;
  detail: Record<string, unknown>;
  allocatedAt: Date;
};
export const AllocationEntity = new EntitySchema<AllocationRow>({
  name: 'Allocation',
  tableName: 'allocation',
  columns: {
    id: { type: 'uuid', primary: true, generated: 'uuid' },
    participantId: { type: 'uuid', name: 'participant_id' },
    studyId: { type: 'uuid', name: 'study_id' },
    armId: { type: 'uuid', name: 'arm_id' },
    stratumKey: { type: 'text', name: 'stratum_key' },
    position: { type: 'integer' },
    kitCode: { type: 'text', name: 'kit_code' },
    algorithm: { type: 'text' },
    algorithmVersion: { type: 'text', name: 'algorithm_version' },
    designVersion: { type: 'integer', name: 'design_version' },
    detail: { type: 'jsonb' },
    allocatedAt: { type: 'timestamptz', name: 'allocated_at' },
  },
});

export type AuditEventRow = {
  seq: string;
  id: string;
  occurredAt: Date;
  actorId: string | null;
  actorEmail: string | null;
  actorRole: string | null;
  action: string;
  entityType: string;
  entityId: string | null;
  studyId: string | null;
  siteId: string | null;
  before: unknown;
  after: unknown;
  reason: string | null;
  requestId: string | null;
  revealsAllocation: boolean;
  prevHash: string;
  hash: string;
  hashScheme: number;
  contentHash: string | null;
};
export const AuditEventEntity = new EntitySchema<AuditEventRow>({
  name: 'AuditEvent',
  tableName: 'audit_event',
  columns: {
    seq: { type: 'bigint', primary: true, generated: 'increment' },
    id: { type: 'uuid' },
    occurredAt: { type: 'timestamptz', name: 'occurred_at' },
    actorId: { type: 'uuid', name: 'actor_id', nullable: true },
    actorEmail: { type: 'text', name: 'actor_email', nullable: true },
    actorRole: { type: 'text', name: 'actor_role', nullable: true },
    action: { type: 'text' },
    entityType: { type: 'text', name: 'entity_type' },
    entityId: { type: 'text', name: 'entity_id', nullable: true },
    studyId: { type: 'uuid', name: 'study_id', nullable: true },
    siteId: { type: 'uuid', name: 'site_id', nullable: true },
    before: { type: 'jsonb', nullable: true },
    after: { type: 'jsonb', nullable: true },
    reason: { type: 'text', nullable: true },
    requestId: { type: 'text', name: 'request_id', nullable: true },
    revealsAllocation: { type: 'boolean', name: 'reveals_allocation' },
    prevHash: { type: 'text', name: 'prev_hash' },
    hash: { type: 'text' },
    hashScheme: { type: 'smallint', name: 'hash_scheme' },
    contentHash: { type: 'text', name: 'content_hash', nullable: true },
  },
});

export const entities = [
  UserEntity,
  StudyEntity,
  SiteEntity,
  ArmEntity,
  MembershipEntity,
  CovariateEntity,
  ParticipantEntity,
  BaselineValueEntity,
  AllocationEntity,
  AuditEventEntity,
];
