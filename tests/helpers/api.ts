import { BASE_URL } from './browser'

export const DEMO_PASSWORD = 'bench-demo-2026'
export const DEMO = {
  admin: 'admin@harbourlane.example',
  editor: 'editor@harbourlane.example',
  author: 'author@harbourlane.example',
  technician: 'tech@harbourlane.example',
} as const

export interface ApiResponse<T = any> {
  status: number
  body: T
  headers: Headers
}

/** A small HTTP client with its own cookie jar: one signed-in person per instance. */
export class ApiClient {
  cookie = ''
  constructor(readonly baseUrl = BASE_URL) {}

  async request<T = any>(method: string, path: string, body?: unknown, headers: Record<string, string> = {}): Promise<ApiResponse<T>> {
    const init: RequestInit = { method, headers: { ...headers }, redirect: 'manual' }
    if (this.cookie) (init.headers as Record<string, string>).cookie = this.cookie
    if (body instanceof FormData) init.body = body
    else if (body !== undefined) {
      (init.headers as Record<string, string>)['content-type'] = 'application/json'
      init.body = typeof body === 'string' ? body : JSON.stringify(body)
    }
    const res = await fetch(`${this.baseUrl}${path}`, init)
    for (const c of res.headers.getSetCookie()) {
      const [pair] = c.split(';')
      const [name, value] = pair!.split('=')
      if (name === 'benchlore-session') this.cookie = value ? `${name}=${value}` : ''
    }
    const text = await res.text()
    let parsed: unknown = text
    try {
      parsed = text ? JSON.parse(text) : null
    }
    catch { /* not JSON: keep the text */ }
    return { status: res.status, body: parsed as T, headers: res.headers }
  }

  get<T = any>(path: string, headers?: Record<string, string>) { return this.request<T>('GET', path, undefined, headers) }
  post<T = any>(path: string, body?: unknown, headers?: Record<string, string>) { return this.request<T>('POST', path, body ?? {}, headers) }
  put<T = any>(path: string, body?: unknown) { return this.request<T>('PUT', path, body ?? {}) }
  patch<T = any>(path: string, body?: unknown) { return this.request<T>('PATCH', path, body ?? {}) }
  delete<T = any>(path: string) { return this.request<T>('DELETE', path) }

  async login(email: string, password = DEMO_PASSWORD): Promise<this> {
    const res = await this.post('/api/auth/login', { email, password })
    if (res.status !== 200) throw new Error(`sign-in as ${email} failed: ${res.status} ${JSON.stringify(res.body)}`)
    return this
  }
}

export async function signedIn(email: string, password = DEMO_PASSWORD): Promise<ApiClient> {
  return await new ApiClient().login(email, password)
}
