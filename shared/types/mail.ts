/** A message kept by the local mail catcher (development and demo only). */
export interface CapturedMailDto {
  id: string
  receivedAt: string
  from: string
  to: string[]
  subject: string
  text: string
}

export type CapturedMailSummaryDto = Omit<CapturedMailDto, 'text'> & { preview: string }

/** GET /api/admin/mail */
export interface CapturedMailListDto {
  data: CapturedMailSummaryDto[]
  meta: { captureEnabled: boolean }
}

/** GET /api/admin/mail/[id] */
export interface CapturedMailReadDto { message: CapturedMailDto }
