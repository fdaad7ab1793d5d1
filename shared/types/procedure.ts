import { z } from 'zod'
import { HAZARDS } from './hazards'
import { MeasurementSpec } from './measurement'
import { DraftStepReasoningFields, StepReasoningFields, foldFailPointsTo } from './verdicts'
import { flowIssues } from '../utils/diagnosis/flow-validation'
import type { CutType } from '../utils/waveform/analyse'
import { CUT_TYPES } from './captures'

export const REVISION_STATES = ['draft', 'in_review', 'published', 'superseded', 'changes_requested', 'rejected'] as const
export type RevisionState = (typeof REVISION_STATES)[number]

export const PROCEDURE_STATUSES = ['active', 'retired'] as const
export type ProcedureStatus = (typeof PROCEDURE_STATUSES)[number]

/** The prior a new cause starts with, and the one a draft's cause without a prior gets. */
export const DEFAULT_PRIOR = 0.2

const SLUG_RULE: TextRule = [/^[a-z0-9]+(?:-[a-z0-9]+)*$/, 'must be a lowercase slug (a-z, 0-9, dashes)']
const KEY_RULE: TextRule = [/^[a-z0-9][a-z0-9_-]*$/, 'must be a short key (a-z, 0-9, _ or -)']
type TextRule = [pattern: RegExp, message: string]

const isCutType = (s: string): s is CutType => (CUT_TYPES as readonly string[]).includes(s)

const markdown = (max: number) => z.string().max(max, `must be at most ${max} characters`)

/**
 * How strictly a revision's fields are checked: `complete` when it goes to review (every field
 * that a bench needs is there and well formed), `draft` while it is being written (sizes only,
 * and what is missing takes its default), so autosave never refuses half-finished work.
 */
type Strictness = 'complete' | 'draft'
type ByStrictness<S extends Strictness, Complete, Draft> = S extends 'complete' ? Complete : Draft

/** The field kinds whose rules differ between a complete revision and a draft. */
function fieldKinds<S extends Strictness>(strictness: S) {
  const complete = strictness === 'complete'
  const choose = <C, D>(c: () => C, d: () => D) => (complete ? c() : d()) as ByStrictness<S, C, D>
  return {
    choose,
    /**
     * Text a complete revision must hold: trimmed, `min` to `max` characters, matching `rule`
     * when one is given. A draft may leave it empty.
     */
    needed(max: number, min = 1, rule?: TextRule, name?: string) {
      const tooShort = name ? `${name} must be at least ${min} characters` : undefined
      const tooLong = name ? `${name} must be at most ${max} characters` : undefined
      return choose(
        () => (rule ? z.string().trim().min(min, tooShort).max(max, tooLong).regex(...rule) : z.string().trim().min(min, tooShort).max(max, tooLong)),
        () => z.string().trim().max(max, tooLong).default(''),
      )
    },
    /** A list a complete revision must fill (`need` says so when it is empty); a draft may leave it empty. */
    neededList<T extends z.core.SomeType>(item: T, max: number, need: string) {
      return choose(() => z.array(item).min(1, need).max(max), () => z.array(item).max(max).default([] as z.output<T>[]))
    },
  }
}

/**
 * A measurement while it is written: the quantity and the limits as in MeasurementSpec, the
 * unit possibly empty, the tolerance not yet checked against its range.
 */
const DraftMeasurement = z.object({
  ...MeasurementSpec.shape,
  quantity: MeasurementSpec.shape.quantity.default('dc_voltage'),
  unit: z.string().trim().max(8).default(''),
  tolerancePct: z.number().finite().optional(),
})

/**
 * Every field of a revision, once: its kind, its limits, what a complete revision needs of it,
 * and the default a draft gets when it is missing.
 */
function revisionFields<S extends Strictness>(strictness: S) {
  const f = fieldKinds(strictness)
  const key = f.needed(40, 1, KEY_RULE)
  const cause = z.object({
    key,
    name: f.needed(160, 2),
    detail: markdown(8000).default(''),
    prior: f.choose(
      () => z.number().finite().gt(0, 'prior must be above 0').max(1, 'prior must be at most 1'),
      () => z.number().finite().min(0).max(1).default(DEFAULT_PRIOR),
    ),
  })
  const step = z.object({
    key,
    title: f.needed(160, 2),
    instruction: f.choose(() => markdown(20000).refine(s => s.trim() !== '', 'say what to do in this step'), () => markdown(20000).default('')),
    measurement: f.choose(() => MeasurementSpec.optional(), () => DraftMeasurement.optional()),
    /**
     * Accepted on input only, as shorthand for the same causes on every failing verdict: parsing
     * writes it out into `verdicts` and drops it, so parsed content never carries it.
     */
    failPointsTo: z.array(key).max(20).optional(),
    /** What each verdict means: the causes it points to, and in a flow where it leads. */
    verdicts: f.choose(() => StepReasoningFields.verdicts, () => DraftStepReasoningFields.verdicts),
    /** The author's estimate of the step's minutes, until records time it. */
    minutes: f.choose(() => StepReasoningFields.minutes, () => DraftStepReasoningFields.minutes),
    imageIds: z.array(z.number().int().positive()).max(12).optional(),
    /**
     * The phase cuts a good unit's capture shows, on a step judged pass or fail: a capture filed on
     * the step can then offer its verdict. Errors land on the list itself, where the form shows them.
     */
    expectedCut: f.choose(
      () => z.array(z.string())
        .min(1, 'choose at least one cut, or none at all')
        .max(CUT_TYPES.length)
        .refine(list => list.every(isCutType), `name only cuts Benchlore knows: ${CUT_TYPES.join(', ')}`)
        .refine(list => new Set(list).size === list.length, 'a cut is chosen twice')
        .transform(list => list as CutType[])
        .optional(),
      () => z.array(z.string().trim().max(40)).max(10).optional(),
    ),
  }).overwrite(foldFailPointsTo)
  const part = z.object({
    name: f.needed(160),
    partNumber: z.string().trim().max(80).optional(),
    substitutes: z.array(f.needed(160)).max(20).default([]),
  })
  return {
    title: f.needed(160, 3, undefined, 'title'),
    deviceType: f.needed(80, 1, SLUG_RULE),
    appliesTo: z.array(f.needed(120)).max(50).default([]),
    summary: markdown(20000).default(''),
    symptoms: f.neededList(f.needed(80, 1, SLUG_RULE), 20, 'name at least one symptom'),
    hazards: z.array(z.enum(HAZARDS)).max(4).default([]),
    causes: f.neededList(cause, 40, 'name at least one likely cause'),
    steps: f.neededList(step, 80, 'add at least one test step'),
    parts: z.array(part).max(60).default([]),
    fix: markdown(20000).default(''),
    verification: markdown(20000).default(''),
  }
}

/** The structured body of a revision. The same schema validates the editor form and the server. */
export const RevisionContent = z
  .object(revisionFields('complete'))
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
      if (step.measurement && step.expectedCut) ctx.addIssue({ code: 'custom', path: ['steps', i, 'expectedCut'], message: 'a step with a measurement is judged by its reading: remove the expected cut or the measurement' })
    })
    // Verdicts naming unknown causes or steps, verdicts a step cannot give, and in a flow loops and unreachable steps.
    for (const issue of flowIssues(c)) ctx.addIssue({ code: 'custom', path: issue.path, message: issue.message })
    if (new Set(c.symptoms).size !== c.symptoms.length) ctx.addIssue({ code: 'custom', path: ['symptoms'], message: 'a symptom is listed twice' })
    if (c.hazards.includes('none') && c.hazards.length > 1) ctx.addIssue({ code: 'custom', path: ['hazards'], message: '"none" cannot be combined with other hazards' })
  })
export type RevisionContent = z.infer<typeof RevisionContent>
export type RevisionContentInput = z.input<typeof RevisionContent>

export const CauseContent = RevisionContent.shape.causes.element
export const StepContent = RevisionContent.shape.steps.element
export const PartContent = RevisionContent.shape.parts.unwrap().element
export type CauseContent = z.infer<typeof CauseContent>
export type StepContent = z.infer<typeof StepContent>

/**
 * What a draft may hold while it is being written: the same fields, every one loosely checked
 * (sizes only) and filled with its default when missing, so autosave never refuses
 * half-finished work. Submission checks the full `RevisionContent`.
 */
export const DraftContent = z.object(revisionFields('draft'))
export type DraftContent = z.infer<typeof DraftContent>
export type DraftCause = DraftContent['causes'][number]
export type DraftStep = DraftContent['steps'][number]
export type DraftPart = DraftContent['parts'][number]
export type DraftMeasurement = z.infer<typeof DraftMeasurement>

/** A saved draft has a title at least: it names the procedure in every list. */
const SavedDraft = DraftContent.extend({ title: RevisionContent.shape.title })

export const RevisionSaveBody = z.object({
  version: z.number().int().positive(),
  content: SavedDraft,
  changeNote: z.string().trim().max(500).optional(),
})
export const ProcedureCreateBody = z.object({ content: SavedDraft, changeNote: z.string().trim().max(500).optional() })
export const StartDraftBody = z.object({ from: z.number().int().positive().optional() })
export const DecisionBody = z.object({ comment: z.string().trim().max(5000).optional() })
export const RequiredCommentBody = z.object({ comment: z.string().trim().min(3, 'say what needs to change (at least 3 characters)').max(5000) })
export const CommentBody = z.object({ body: z.string().trim().min(1, 'is required').max(5000), stepKey: StepContent.shape.key.optional() })
export const CommentPatchBody = z.object({ resolved: z.boolean() })
export const RetireBody = z.object({ reason: z.string().trim().min(3, 'give a reason (at least 3 characters)').max(500) })
