import { z } from 'zod'
import { HAZARDS } from './hazards'
import { MeasurementSpec } from './measurement'

export const REVISION_STATES = ['draft', 'in_review', 'published', 'superseded', 'changes_requested', 'rejected'] as const
export type RevisionState = (typeof REVISION_STATES)[number]

export const PROCEDURE_STATUSES = ['active', 'retired'] as const
export type ProcedureStatus = (typeof PROCEDURE_STATUSES)[number]

const slug = z.string().trim().min(1).max(80).regex(/^[a-z0-9]+(?:-[a-z0-9]+)*$/, 'must be a lowercase slug (a-z, 0-9, dashes)')
const key = z.string().trim().min(1).max(40).regex(/^[a-z0-9][a-z0-9_-]*$/, 'must be a short key (a-z, 0-9, _ or -)')
const markdown = (max: number) => z.string().max(max, `must be at most ${max} characters`)

export const CauseContent = z.object({
  key,
  name: z.string().trim().min(2).max(160),
  detail: markdown(8000).default(''),
  prior: z.number().finite().gt(0, 'prior must be above 0').max(1, 'prior must be at most 1'),
})

export const StepContent = z.object({
  key,
  title: z.string().trim().min(2).max(160),
  instruction: markdown(20000),
  measurement: MeasurementSpec.optional(),
  failPointsTo: z.array(key).max(20).optional(),
  imageIds: z.array(z.number().int().positive()).max(12).optional(),
})

export const PartContent = z.object({
  name: z.string().trim().min(1).max(160),
  partNumber: z.string().trim().max(80).optional(),
  substitutes: z.array(z.string().trim().min(1).max(160)).max(20).default([]),
})

/** The structured body of a revision. The same schema validates the editor form and the server. */
export const RevisionContent = z
  .object({
    title: z.string().trim().min(3, 'title must be at least 3 characters').max(160, 'title must be at most 160 characters'),
    deviceType: slug,
    appliesTo: z.array(z.string().trim().min(1).max(120)).max(50).default([]),
    summary: markdown(20000).default(''),
    symptoms: z.array(slug).min(1, 'name at least one symptom').max(20),
    hazards: z.array(z.enum(HAZARDS)).max(4).default([]),
    causes: z.array(CauseContent).min(1, 'name at least one likely cause').max(40),
    steps: z.array(StepContent).min(1, 'add at least one test step').max(80),
    parts: z.array(PartContent).max(60).default([]),
    fix: markdown(20000).default(''),
    verification: markdown(20000).default(''),
  })
  .superRefine((c, ctx) => {
    const causeKeys = new Set<string>()
    c.causes.forEach((cause, i) => {
      if (causeKeys.has(cause.key)) ctx.addIssue({ code: 'custom', path: ['causes', i, 'key'], message: `cause key "${cause.key}" is used twice` })
      causeKeys.add(cause.key)
    })
    const stepKeys = new Set<string>()
    c.steps.forEach((step, i) => {
      if (stepKeys.has(step.key)) ctx.addIssue({ code: 'custom', path: ['steps', i, 'key'], message: `step key "${step.key}" is used twice` })
      stepKeys.add(step.key)
      step.failPointsTo?.forEach((k, j) => {
        if (!causeKeys.has(k)) ctx.addIssue({ code: 'custom', path: ['steps', i, 'failPointsTo', j], message: `step "${step.title}" points to cause "${k}", which is not among the causes` })
      })
    })
    if (new Set(c.symptoms).size !== c.symptoms.length) ctx.addIssue({ code: 'custom', path: ['symptoms'], message: 'a symptom is listed twice' })
    if (c.hazards.includes('none') && c.hazards.length > 1) ctx.addIssue({ code: 'custom', path: ['hazards'], message: '"none" cannot be combined with other hazards' })
  })
export type RevisionContent = z.infer<typeof RevisionContent>
export type RevisionContentInput = z.input<typeof RevisionContent>
export type CauseContent = z.infer<typeof CauseContent>
export type StepContent = z.infer<typeof StepContent>

/**
 * What a draft may hold while it is being written: the same fields, every one optional and
 * loosely checked (sizes only), so autosave never refuses half-finished work. Only the title is
 * required. Submission checks the full `RevisionContent`.
 */
export const DraftContent = z.object({
  title: z.string().trim().min(3, 'title must be at least 3 characters').max(160, 'title must be at most 160 characters'),
  deviceType: z.string().trim().max(80).default(''),
  appliesTo: z.array(z.string().trim().max(120)).max(50).default([]),
  summary: markdown(20000).default(''),
  symptoms: z.array(z.string().trim().max(80)).max(20).default([]),
  hazards: z.array(z.enum(HAZARDS)).max(4).default([]),
  causes: z.array(z.object({
    key: z.string().trim().max(40).default(''),
    name: z.string().max(160).default(''),
    detail: markdown(8000).default(''),
    prior: z.number().finite().min(0).max(1).default(0.5),
  })).max(40).default([]),
  steps: z.array(z.object({
    key: z.string().trim().max(40).default(''),
    title: z.string().max(160).default(''),
    instruction: markdown(20000).default(''),
    measurement: z.object({
      quantity: z.string().max(40).optional(),
      unit: z.string().max(8).optional(),
      min: z.number().finite().optional(),
      max: z.number().finite().optional(),
      nominal: z.number().finite().optional(),
      tolerancePct: z.number().finite().optional(),
      openExpected: z.boolean().optional(),
    }).optional(),
    failPointsTo: z.array(z.string().max(40)).max(20).optional(),
    imageIds: z.array(z.number().int().positive()).max(12).optional(),
  })).max(80).default([]),
  parts: z.array(z.object({
    name: z.string().max(160).default(''),
    partNumber: z.string().max(80).optional(),
    substitutes: z.array(z.string().max(160)).max(20).default([]),
  })).max(60).default([]),
  fix: markdown(20000).default(''),
  verification: markdown(20000).default(''),
})
export type DraftContent = z.infer<typeof DraftContent>

export const RevisionSaveBody = z.object({
  version: z.number().int().positive(),
  content: DraftContent,
  changeNote: z.string().trim().max(500).optional(),
})
export const ProcedureCreateBody = z.object({ content: DraftContent, changeNote: z.string().trim().max(500).optional() })
export const StartDraftBody = z.object({ from: z.number().int().positive().optional() })
export const DecisionBody = z.object({ comment: z.string().trim().max(5000).optional() })
export const RequiredCommentBody = z.object({ comment: z.string().trim().min(3, 'say what needs to change (at least 3 characters)').max(5000) })
export const CommentBody = z.object({ body: z.string().trim().min(1, 'is required').max(5000), stepKey: key.optional() })
export const CommentPatchBody = z.object({ resolved: z.boolean() })
export const RetireBody = z.object({ reason: z.string().trim().min(3, 'give a reason (at least 3 characters)').max(500) })
