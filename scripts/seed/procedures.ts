import { createHash } from 'node:crypto'
import sharp from 'sharp'
import { RevisionContent } from '../../shared/types/procedure'
import { Attachment, DeviceType, Procedure, ReviewComment, Revision, Symptom, type User, useDb } from '../../server/db'
import type { ObjectStore } from '../../server/services/storage'
import { DEMO_DEVICE_TYPES, DEMO_IMAGES, DEMO_PROCEDURES, DEMO_STEP_IMAGES, DEMO_SYMPTOMS, type DemoPerson } from './demo-content'
import { renderDemoImage } from './demo-images'

const DAY = 86_400_000
const daysAgo = (n: number, hours = 0) => new Date(Date.now() - n * DAY + hours * 3_600_000)

export async function seedVocabulary(): Promise<void> {
  for (const d of DEMO_DEVICE_TYPES) {
    await DeviceType.findOrCreate({ where: { slug: d.slug }, defaults: { slug: d.slug, name: d.name, description: d.description } })
  }
  for (const s of DEMO_SYMPTOMS) {
    await Symptom.findOrCreate({ where: { slug: s.slug }, defaults: { slug: s.slug, name: s.name, description: s.description, synonyms: s.synonyms, status: 'accepted', mergedIntoId: null, proposedById: null } })
  }
}

/** Draws and stores the demo bench photos once; returns their attachment ids by name. */
async function seedImages(store: ObjectStore, uploader: User): Promise<Map<string, number>> {
  const ids = new Map<string, number>()
  for (const image of DEMO_IMAGES) {
    const key = `images/demo-${image.name.replace(/\.jpg$/, '')}.jpg`
    let row = await Attachment.findOne({ where: { objectKey: key } })
    if (!row) {
      const data = await renderDemoImage(image.name)
      const meta = await sharp(data).metadata()
      const thumb = await sharp(data).resize({ width: 480, height: 480, fit: 'inside' }).jpeg({ quality: 80 }).toBuffer()
      const thumbKey = key.replace(/\.jpg$/, '-thumb.jpg')
      await store.put(key, data, 'image/jpeg')
      await store.put(thumbKey, thumb, 'image/jpeg')
      row = await Attachment.create({ objectKey: key, thumbnailKey: thumbKey, kind: 'image', mime: 'image/jpeg', bytes: data.length, width: meta.width ?? null, height: meta.height ?? null, sha256: createHash('sha256').update(data).digest('hex'), caption: image.caption, uploadedById: uploader.id })
    }
    ids.set(image.name, row.id)
  }
  return ids
}

/**
 * The demo library: every procedure with its revision history as the demo content describes
 * it (states, reviewers, dates, comments), images placed in their steps. A procedure that
 * already exists is left alone.
 */
export async function seedProcedures(people: Record<DemoPerson, User>, store: ObjectStore): Promise<number> {
  const images = await seedImages(store, people.tomasz)
  let created = 0
  for (const demo of DEMO_PROCEDURES) {
    if (await Procedure.findOne({ where: { slug: demo.slug } })) continue
    await useDb().transaction(async (transaction) => {
      const first = demo.revisions[0]!
      const proc = await Procedure.create({ slug: demo.slug, createdById: people[demo.createdBy].id, publishedRevisionId: null, retiredAt: null, createdAt: daysAgo(first.daysAgo + 1) }, { transaction })
      let number = 0
      let previous: Revision | null = null
      let published: Revision | null = null
      for (const r of demo.revisions) {
        const content = RevisionContent.parse(r.content)
        for (const step of content.steps) {
          const names = DEMO_STEP_IMAGES[`${demo.slug}/${step.key}`]
          if (names?.length) step.imageIds = names.map(n => images.get(n)!).filter(Boolean)
        }
        const submitted = r.state !== 'draft'
        if (submitted) number++
        const decided = ['published', 'superseded', 'changes_requested', 'rejected'].includes(r.state)
        const rev: Revision = await Revision.create({
          procedureId: proc.id,
          number: submitted ? number : null,
          state: r.state,
          authorId: people[r.author].id,
          content,
          changeNote: r.changeNote,
          baseRevisionId: previous?.id ?? null,
          reviewerId: decided && r.reviewer ? people[r.reviewer].id : null,
          version: submitted ? 1 : 3,
          submittedAt: submitted ? daysAgo(r.daysAgo) : null,
          decidedAt: decided ? daysAgo(r.daysAgo - 1) : null,
          publishedAt: r.state === 'published' || r.state === 'superseded' ? daysAgo(r.daysAgo - 1) : null,
          createdAt: daysAgo(r.daysAgo, -4),
        }, { transaction })
        for (const c of r.comments ?? []) {
          await ReviewComment.create({ revisionId: rev.id, authorId: people[c.by].id, body: c.body, stepKey: c.stepKey ?? null, resolved: c.resolved ?? false, createdAt: daysAgo(r.daysAgo - 1) }, { transaction })
        }
        if (r.state === 'published') published = rev
        previous = rev
      }
      await proc.update({
        lastNumber: number,
        publishedRevisionId: published?.id ?? null,
        status: demo.retired ? 'retired' : 'active',
        retiredAt: demo.retired ? daysAgo(20) : null,
      }, { transaction })
    })
    created++
  }
  return created
}
