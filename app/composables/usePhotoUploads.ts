// Photo uploads with progress, for the editor's step images and a record's bench photos.
// XMLHttpRequest because fetch still reports no upload progress, and a phone photo over
// workshop Wi-Fi takes long enough to need a bar. The server checks everything again.

export interface PhotoUpload { id: number, name: string, loaded: number, total: number, error: string, xhr: XMLHttpRequest | null }
export interface UploadedPhoto { id: number, url: string, thumbnailUrl: string, width: number, height: number }

export const PHOTO_TYPES = ['image/jpeg', 'image/png', 'image/webp']
export const MAX_PHOTO_BYTES = 15 * 1024 * 1024

export const uploadPercent = (u: PhotoUpload) => (u.total > 0 ? Math.round((u.loaded / u.total) * 100) : 0)
export const sizeText = (bytes: number) => (bytes >= 1024 * 1024 ? `${(bytes / 1024 / 1024).toFixed(1)} MB` : `${Math.max(1, Math.round(bytes / 1024))} kB`)

/**
 * `free()`: how many more photos fit, not counting uploads in flight; `full`: what to say when
 * none does; `uploaded`: called with each stored photo. `room` counts the uploads in flight too.
 */
export function usePhotoUploads(opts: { free: () => number, full: string, uploaded: (photo: UploadedPhoto, file: File) => void }) {
  const uploads = ref<PhotoUpload[]>([])
  const room = computed(() => opts.free() - uploads.value.filter(u => !u.error).length)
  let seq = 0
  const drop = (id: number) => (uploads.value = uploads.value.filter(u => u.id !== id))

  function start(file: File) {
    const upload = reactive<PhotoUpload>({ id: ++seq, name: file.name, loaded: 0, total: file.size, error: '', xhr: null })
    uploads.value.push(upload)
    if (room.value < 0) return void (upload.error = opts.full)
    if (!PHOTO_TYPES.includes(file.type)) return void (upload.error = 'Only JPEG, PNG or WebP photos can be added.')
    if (file.size > MAX_PHOTO_BYTES) return void (upload.error = `${sizeText(file.size)} is over the 15 MB limit.`)

    const body = new FormData()
    body.append('file', file)
    const xhr = new XMLHttpRequest()
    upload.xhr = xhr
    xhr.open('POST', '/api/uploads')
    xhr.responseType = 'json'
    xhr.upload.onprogress = (e) => {
      upload.loaded = e.loaded
      if (e.lengthComputable) upload.total = e.total
    }
    xhr.onload = () => {
      upload.xhr = null
      const res = xhr.response as { id?: number, url?: string, thumbnailUrl?: string, width?: number, height?: number, message?: string } | null
      if ((xhr.status === 201 || xhr.status === 200) && res?.id) {
        opts.uploaded({ id: res.id, url: res.url ?? `/api/files/${res.id}`, thumbnailUrl: res.thumbnailUrl ?? `/api/files/${res.id}?size=thumb`, width: res.width ?? 0, height: res.height ?? 0 }, file)
        drop(upload.id)
      }
      else {
        upload.error = res?.message ?? `The upload was refused (${xhr.status}).`
      }
    }
    xhr.onerror = () => {
      upload.xhr = null
      upload.error = 'The upload stopped: the server could not be reached.'
    }
    xhr.onabort = () => drop(upload.id)
    xhr.send(body)
  }

  function cancel(u: PhotoUpload) {
    if (u.xhr) u.xhr.abort()
    else drop(u.id)
  }

  function pick(event: Event) {
    const input = event.target as HTMLInputElement
    const files = Array.from(input.files ?? [])
    input.value = ''
    for (const file of files) start(file)
  }

  return { uploads, room, start, cancel, pick }
}
